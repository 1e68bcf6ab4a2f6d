"""A throwaway PostgreSQL cluster for tests and benches: initdb into a temporary folder, a free
port on 127.0.0.1, started as an unprivileged user (the server refuses to run as root), torn
down afterwards. Binaries are found through pg_config, /usr/lib/postgresql/*/bin or PATH."""

from __future__ import annotations

import glob
import os
import pwd
import secrets
import shutil
import socket
import subprocess
import tempfile
from pathlib import Path

SKIP_REASON = (
    "PostgreSQL server binaries (initdb, pg_ctl) not found: the hub tests need them "
    "(Debian: apt-get install postgresql)"
)


def find_bindir() -> Path | None:
    """The folder holding initdb and pg_ctl, or None."""
    candidates: list[Path] = []
    pg_config = shutil.which("pg_config")
    if pg_config:
        try:
            out = subprocess.run(
                [pg_config, "--bindir"], capture_output=True, text=True, check=True, timeout=10
            ).stdout.strip()
            candidates.append(Path(out))
        except (OSError, subprocess.SubprocessError):
            pass

    def version(p: str) -> float:
        try:
            return float(Path(p).parent.name)
        except ValueError:
            return 0.0

    candidates += [
        Path(p) for p in sorted(glob.glob("/usr/lib/postgresql/*/bin"), key=version)[::-1]
    ]
    initdb = shutil.which("initdb")
    if initdb:
        candidates.append(Path(os.path.realpath(initdb)).parent)
    for c in candidates:
        if (c / "initdb").is_file() and (c / "pg_ctl").is_file():
            return c
    return None


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class Cluster:
    """One server. ``url(db, user=..., password=...)`` builds a URL; ``psql(sql)`` runs SQL as
    the superuser through psycopg; ``stop(mode)`` / ``start()`` for fault tests."""

    def __init__(self, bindir: Path):
        self.bindir = bindir
        self.root = Path(tempfile.mkdtemp(prefix="fieldcheck-pg-"))
        self.data = self.root / "data"
        self.port = free_port()
        self.user = "fcadmin"
        self.password = secrets.token_hex(8)
        self.runas: list[str] = []
        self._made = 0
        if os.geteuid() == 0:
            name = "postgres"
            try:
                pw = pwd.getpwnam(name)
            except KeyError:
                name, pw = "nobody", pwd.getpwnam("nobody")
            os.chown(self.root, pw.pw_uid, pw.pw_gid)
            if shutil.which("runuser"):
                self.runas = ["runuser", "-u", name, "--"]
            else:
                self.runas = [
                    "setpriv",
                    f"--reuid={pw.pw_uid}",
                    f"--regid={pw.pw_gid}",
                    "--clear-groups",
                ]
        pwfile = self.root / "pw"
        pwfile.write_text(self.password + "\n")
        if self.runas:
            os.chown(pwfile, pw.pw_uid, pw.pw_gid)
        self._run(
            "initdb",
            "-D",
            str(self.data),
            "-U",
            self.user,
            f"--pwfile={pwfile}",
            "--auth-local=trust",
            "--auth-host=scram-sha-256",
            "--no-sync",
            "-E",
            "UTF8",
            "--locale=C",
        )
        pwfile.unlink()
        self.start()

    def _run(self, tool: str, *args: str, check: bool = True) -> subprocess.CompletedProcess:
        return subprocess.run(
            [*self.runas, str(self.bindir / tool), *args],
            capture_output=True,
            text=True,
            check=check,
            timeout=120,
            cwd=self.root,
        )

    def start(self) -> None:
        opts = (
            f"-p {self.port} -k {self.root} -c listen_addresses=127.0.0.1 -c fsync=off "
            "-c full_page_writes=off -c max_connections=60 -c shared_buffers=64MB"
        )
        self._run(
            "pg_ctl", "-D", str(self.data), "-o", opts, "-l", str(self.root / "log"), "-w", "start"
        )

    def stop(self, mode: str = "fast") -> None:
        self._run("pg_ctl", "-D", str(self.data), "-m", mode, "-w", "stop", check=False)

    def url(
        self, db: str = "postgres", user: str | None = None, password: str | None = None
    ) -> str:
        user = user or self.user
        pw = self.password if password is None and user == self.user else password
        auth = f"{user}:{pw}" if pw else user
        return f"postgresql://{auth}@127.0.0.1:{self.port}/{db}"

    def sql(self, sql: str, db: str = "postgres") -> list[tuple]:
        import psycopg

        with psycopg.connect(self.url(db), autocommit=True) as conn:
            cur = conn.execute(sql)
            return cur.fetchall() if cur.description else []

    def new_database(self, name: str) -> str:
        """A fresh database (the name gets a number: each call makes a new one)."""
        self._made += 1
        name = f"{name}_{self._made}"
        self.sql(f'CREATE DATABASE "{name}" STRATEGY FILE_COPY')
        return name

    def close(self) -> None:
        self.stop("immediate")
        shutil.rmtree(self.root, ignore_errors=True)
