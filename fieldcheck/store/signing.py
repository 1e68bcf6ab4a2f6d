"""The office key: bundles are signed with HMAC-SHA256 (stdlib ``hmac``) over their manifest.

The manifest names the snapshot's size and sha256, so one signature over the manifest covers
every byte of the bundle. A receiver refuses a bundle that is unsigned, signed with a key it does
not hold, or whose signature does not match: editing rows and recomputing the checksums (which
anyone can do) no longer makes a bundle that is taken.

Keys live in a small text file, one key a line, ``KEY-ID SECRET-HEX``: the first line signs, every
line verifies (so an office can rotate: new key first, the old one kept until every laptop has
synced). The file is ``$FIELDCHECK_OFFICE_KEY_FILE``, else ``office.key`` in the user's config
folder (platformdirs). ``fieldcheck office-key`` makes, shows, adds, rotates and retires keys.

Bundles that never leave one process (a sync with an office log file, through a temporary folder)
are signed with a key made for that process alone (``Keyring.ephemeral()``).
"""

from __future__ import annotations

import hashlib
import hmac
import json
import os
import re
import secrets
from dataclasses import dataclass
from pathlib import Path

from fieldcheck.store.merge import TransferRefused

ALGORITHM = "hmac-sha256"
_LINE = re.compile(r"^([A-Za-z0-9_-]{1,40})\s+([0-9a-f]{64})$")
SETUP = (
    "set up the office key: in the office run `fieldcheck office-key new` and "
    "`fieldcheck office-key show`, then on each laptop `fieldcheck office-key add KEY-ID SECRET`"
)


@dataclass(frozen=True)
class Keyring:
    keys: tuple[tuple[str, bytes], ...]  # (key id, secret); the first signs

    @classmethod
    def ephemeral(cls) -> Keyring:
        return cls(((f"local-{secrets.token_hex(4)}", secrets.token_bytes(32)),))

    @property
    def current(self) -> tuple[str, bytes]:
        return self.keys[0]

    def secret(self, key_id: str) -> bytes | None:
        return next((s for k, s in self.keys if k == key_id), None)


def key_file() -> Path:
    env = os.environ.get("FIELDCHECK_OFFICE_KEY_FILE")
    if env:
        return Path(env).expanduser()
    import platformdirs

    return Path(platformdirs.user_config_dir("fieldcheck", appauthor=False)) / "office.key"


def parse_keys(text: str, where: str = "the office key file") -> Keyring:
    keys = []
    for n, line in enumerate(text.splitlines(), 1):
        line = line.strip()
        if not line or line.startswith("#"):
            continue
        m = _LINE.match(line)
        if not m:
            raise TransferRefused(
                f"{where}, line {n}, is not a key (KEY-ID and 64 hex digits); {SETUP}"
            )
        keys.append((m.group(1), bytes.fromhex(m.group(2))))
    if not keys:
        raise TransferRefused(f"{where} holds no key; {SETUP}")
    return Keyring(tuple(keys))


def load(path: Path | None = None) -> Keyring | None:
    """The office keyring of this computer, or None when there is no key file."""
    path = path or key_file()
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        return None
    except (OSError, UnicodeDecodeError) as exc:
        raise TransferRefused(f"the office key file {path} cannot be read ({exc})") from None
    return parse_keys(text, f"the office key file {path}")


def required() -> Keyring:
    ring = load()
    if ring is None:
        raise TransferRefused(
            f"this computer has no office key ({key_file()}), so bundles can be neither signed "
            f"nor checked; {SETUP}"
        )
    return ring


def _canonical(manifest: dict) -> bytes:
    body = {k: v for k, v in manifest.items() if k != "signature"}
    return json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=True).encode()


def sign(manifest: dict, ring: Keyring) -> dict:
    key_id, secret = ring.current
    mac = hmac.new(secret, _canonical(manifest), hashlib.sha256).hexdigest()
    return {**manifest, "signature": {"algorithm": ALGORITHM, "key_id": key_id, "mac": mac}}


def verify(manifest: dict, ring: Keyring, name: str) -> None:
    """Refuse (TransferRefused) a manifest that is unsigned or badly signed."""
    sig = manifest.get("signature")
    if not isinstance(sig, dict):
        raise TransferRefused(
            f"the bundle {name} is not signed with the office key; it was refused, nothing was "
            "changed (take bundles only from fieldcheck logs of this office)"
        )
    key_id, mac = sig.get("key_id"), sig.get("mac")
    if sig.get("algorithm") != ALGORITHM or not isinstance(key_id, str) or not isinstance(mac, str):
        raise TransferRefused(f"the bundle {name} carries a signature of an unknown kind; refused")
    secret = ring.secret(key_id)
    if secret is None:
        raise TransferRefused(
            f"the bundle {name} is signed with office key {key_id[:40]!r}, which this computer "
            "does not hold; add the office's current key (`fieldcheck office-key add`), nothing "
            "was changed"
        )
    want = hmac.new(secret, _canonical(manifest), hashlib.sha256).hexdigest()
    if not hmac.compare_digest(want, mac):
        raise TransferRefused(
            f"the bundle {name} does not match its office-key signature (edited after it was "
            "written, or forged); it was refused and nothing was changed"
        )


# ----------------------------------------------------------------------------- key management


def new_key_line() -> str:
    return f"k{secrets.token_hex(4)} {secrets.token_hex(32)}"


def write_keys(lines: list[str], path: Path | None = None) -> Path:
    """Write the key file (owner-only permissions), atomically."""
    path = path or key_file()
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(path.name + f".{os.getpid()}.part")
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write(
            "# fieldcheck office keys: KEY-ID SECRET. The first line signs bundles; every line\n"
            "# is accepted. Keep this file private: anyone holding it can sign bundles.\n"
        )
        fh.write("".join(line + "\n" for line in lines))
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, path)
    return path


def key_lines(ring: Keyring) -> list[str]:
    return [f"{k} {s.hex()}" for k, s in ring.keys]
