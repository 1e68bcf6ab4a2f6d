"""The config file: TOML in the user config folder, FIELDCHECK_UNITS over it, bad files named."""

from __future__ import annotations

import pytest

from fieldcheck import config


def test_missing_file_gives_the_defaults(tmp_path, monkeypatch):
    monkeypatch.delenv("FIELDCHECK_UNITS", raising=False)
    cfg = config.load(tmp_path / "none.toml")
    assert cfg == config.Config()


def test_the_default_place_is_the_platforms_user_config_folder(monkeypatch):
    from platformdirs import user_config_dir

    monkeypatch.delenv("FIELDCHECK_CONFIG", raising=False)
    path = config.config_path()
    assert path.parent == type(path)(user_config_dir("fieldcheck", appauthor=False))
    assert path.name == "config.toml"


def test_file_values_and_the_units_variable(tmp_path, monkeypatch):
    f = tmp_path / "config.toml"
    f.write_text(
        'units = "metric"\ninspector = "R. Okafor"\nfirm = "Example Structural"\n'
        'engineer = "A. Engineer"\n[report]\nclient = "Owners"\njob = "J-1"\nnumber = 7\n',
        encoding="utf-8",
    )
    monkeypatch.delenv("FIELDCHECK_UNITS", raising=False)
    cfg = config.load(f)
    assert (cfg.units, cfg.inspector, cfg.firm, cfg.engineer) == (
        "metric",
        "R. Okafor",
        "Example Structural",
        "A. Engineer",
    )
    assert (cfg.client, cfg.job, cfg.report_number, cfg.path) == ("Owners", "J-1", "7", f)
    monkeypatch.setenv("FIELDCHECK_UNITS", "US")
    assert config.load(f).units == "us"


@pytest.mark.parametrize(
    "text, message",
    [
        ('units = "imperial"', "units 'imperial' is not known; write us or metric"),
        ("firm = 3", "firm must be text"),
        ("units = ", "not valid TOML"),
        ('report = "x"', "[report] must be a table"),
    ],
)
def test_a_bad_file_is_one_sentence_naming_it(tmp_path, monkeypatch, text, message):
    monkeypatch.delenv("FIELDCHECK_UNITS", raising=False)
    f = tmp_path / "config.toml"
    f.write_text(text + "\n", encoding="utf-8")
    with pytest.raises(ValueError, match="config file") as exc:
        config.load(f)
    assert message in str(exc.value)


def test_a_bad_units_variable_is_refused(tmp_path, monkeypatch):
    monkeypatch.setenv("FIELDCHECK_UNITS", "furlongs")
    with pytest.raises(ValueError, match="FIELDCHECK_UNITS: units 'furlongs' is not known"):
        config.load(tmp_path / "none.toml")
