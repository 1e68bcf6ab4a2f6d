"""One module per subcommand of `fieldcheck`.

Each module defines ``NAME`` (the subcommand), ``HELP`` (one line), ``add_arguments(parser)``
and ``run(args) -> int``. cli.py imports a module only when its subcommand is used, so the
start-up cost of one command never includes another's imports.
"""

# subcommand -> module (fieldcheck.commands.<module>)
COMMANDS: dict[str, tuple[str, str]] = {
    "rate": ("rate", "rate one post (options) or many (--batch IN.csv --out OUT.csv)"),
    "k-factor": ("k_factor", "effective-length factor for spring-restrained or braced ends"),
    "demo": ("demo", "write the demo survey into a log, without the interface"),
    "import": ("import_csv", "add posts from a CSV file (or a sync bundle) to a survey log"),
    "export": ("export", "write a survey log as CSV or JSON (or a sync bundle)"),
    "report": ("report", "write the survey report as one self-contained HTML file"),
    "sync": ("sync", "send this log to the office and take back what is new"),
    "attach": (
        "attach",
        "attach a photo with a caption to a post (carried by sync, shown in reports)",
    ),
    "review": ("review", "record the office engineer's review of a post, or sign off a visit"),
    "hub-sql": ("hub_sql", "print the office hub's one-time SQL for the database administrator"),
    "office-key": ("office_key", "make, show, add or rotate the office key that signs bundles"),
    "check": ("check", "integrity check of a survey log"),
    "rerate": ("rerate", "re-rate every current post of a log with this engine, in one pass"),
}
