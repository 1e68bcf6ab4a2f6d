"""`fieldcheck sync`, `export --bundle`, `import --bundle`: exit codes and sentences."""

from __future__ import annotations

from fieldcheck.cli import main
from fieldcheck.store import Log


def test_sync_export_import_commands(tmp_path, shore, capsys):
    field = tmp_path / "field.db"
    with Log.open(field, author="ann", device="dev-ann") as lg:
        site = lg.add_site("Alder Row")
        lg.save_post(lg.add_visit(site.id, "ann").id, shore)
    office = tmp_path / "office.db"
    assert main(["sync", "--db", str(field), str(office)]) == 0
    out = capsys.readouterr().out
    assert "Sent" in out and "observations" in out
    assert main(["sync", "--db", str(field), str(office)]) == 0
    assert "nothing to move" in capsys.readouterr().out
    bundle = tmp_path / "b.fcbundle"
    assert main(["export", "--db", str(field), "--bundle", str(bundle)]) == 0
    assert main(["import", "--db", str(tmp_path / "copy.db"), "--bundle", str(bundle)]) == 0
    assert "Took" in capsys.readouterr().out
    bundle.write_bytes(bundle.read_bytes()[:100])
    assert main(["import", "--db", str(office), "--bundle", str(bundle)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("fieldcheck: the bundle b.fcbundle is truncated") and err.count("\n") == 1
