"""The cautions that go with every result a person sees (field practice; OSHA 1926.850)."""

CAUTIONS: tuple[str, ...] = (
    "fieldcheck is a screening aid for a competent person, not a design. Local codes, the "
    "authority having jurisdiction and a licensed engineer govern.",
    "Values for species and grade are reference values that assume sound, correctly graded "
    "wood; measure what is there and record what you could not see.",
    "Stop work and clear the area under the load if you see crushing at a cap, sill or wedge, "
    "a split opening, a post moving or out of plumb more than before, a settling sill or soft "
    "ground, new cracks above, or hear creaking; then call the engineer.",
    "Never stand under an unshored load to measure. Work with a spotter and an agreed escape "
    "route near questionable shoring.",
)
