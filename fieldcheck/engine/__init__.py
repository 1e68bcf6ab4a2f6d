"""Pure numpy engine (SI inside): rating.rate() runs the stages listed in rating.STAGES."""
