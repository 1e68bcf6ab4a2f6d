"""The user's settings: one TOML file in the platform's user config folder.

    from fieldcheck.config import load, config_path
    cfg = load()            # Config; a missing file gives the defaults
    cfg.units               # "us" | "metric": FIELDCHECK_UNITS, else the file, else "us"
    cfg.inspector, cfg.firm, cfg.engineer, cfg.client, cfg.job, cfg.report_number

The file (``fieldcheck config-path`` is where; $FIELDCHECK_CONFIG names another)::

    units = "metric"              # default unit system for display
    inspector = "R. Okafor"       # who inspects, when a command is not told
    firm = "Example Structural"   # on the report's title block
    engineer = "A. Engineer, PE"

    [report]                      # the job this laptop is on (options override each)
    client = "Alder Row owners"
    job = "J-2041"
    number = "R-0007"

A bad file is a ValueError naming the file, the key and what is accepted (the CLI prints it as
one sentence, exit 2); it is never ignored silently.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

UNITS = ("us", "metric")
TEXT_KEYS = ("inspector", "firm", "engineer")
REPORT_KEYS = ("client", "job", "number")


@dataclass(frozen=True)
class Config:
    units: str = "us"
    inspector: str = ""
    firm: str = ""
    engineer: str = ""
    client: str = ""
    job: str = ""
    report_number: str = ""
    path: Path | None = None  # the file read, None when there was none


def config_path() -> Path:
    """$FIELDCHECK_CONFIG, else config.toml in the user config folder (platformdirs: right on
    Linux, macOS and Windows)."""
    env = os.environ.get("FIELDCHECK_CONFIG")
    if env:
        return Path(env).expanduser()
    from platformdirs import user_config_dir

    return Path(user_config_dir("fieldcheck", appauthor=False)) / "config.toml"


def _units(value: object, where: str) -> str:
    v = str(value).strip().lower()
    if v not in UNITS:
        raise ValueError(f"{where}: units '{value}' is not known; write us or metric")
    return v


def load(path: Path | None = None) -> Config:
    """The settings from ``path`` (default: config_path()), FIELDCHECK_UNITS over the file."""
    path = path or config_path()
    data: dict = {}
    read: Path | None = None
    if path.is_file():
        import tomllib  # only when there is a file to read (start-up speed)

        try:
            data = tomllib.loads(path.read_text(encoding="utf-8"))
        except (OSError, UnicodeDecodeError) as exc:
            raise ValueError(f"config file {path}: cannot read it ({exc})") from None
        except tomllib.TOMLDecodeError as exc:
            raise ValueError(f"config file {path}: not valid TOML ({exc})") from None
        read = path
    out: dict[str, str] = {}
    for key in TEXT_KEYS:
        if key in data:
            if not isinstance(data[key], str):
                raise ValueError(f'config file {path}: {key} must be text, e.g. {key} = "..."')
            out[key] = data[key].strip()
    report = data.get("report", {})
    if not isinstance(report, dict):
        raise ValueError(f"config file {path}: [report] must be a table of client, job, number")
    for key in REPORT_KEYS:
        if key in report:
            if not isinstance(report[key], str | int):
                raise ValueError(f"config file {path}: report.{key} must be text")
            out["report_number" if key == "number" else key] = str(report[key]).strip()
    units = "us"
    if "units" in data:
        units = _units(data["units"], f"config file {path}")
    env = os.environ.get("FIELDCHECK_UNITS")
    if env:
        units = _units(env, "FIELDCHECK_UNITS")
    return Config(units=units, path=read, **out)
