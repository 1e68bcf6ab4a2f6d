"""Photo files of a survey log: kept beside it, named by their SHA-256, carried by sync.

from fieldcheck.store.photos import attach_photo, photo_file, sync_photos
a = attach_photo(log, observation_id, "~/DCIM/P1.jpg", caption="crushing at the cap")
    # copies the photo into the log's photo folder (<log stem>-photos/<sha256>.<ext>, written
    # beside and renamed), then records it (Log.attach: path, sha256, size, caption). The
    # interface calls this too. The original file is left as it is.
photo_file(log, attachment) -> Path | None     # the file, only if its sha256 is the recorded
sync_photos(log, office) -> PhotoSync(sent, received, refused)
    # after the rows have synced: every photo one side records and the other lacks is copied
    # (to the other log's photo folder, or <shared folder>/photos/), and kept only when its
    # sha256 on arrival is the one recorded; a file that arrives different is removed and
    # named in ``refused``.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import shutil
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

SUFFIXES = (".jpg", ".jpeg", ".png", ".heic", ".webp", ".tif", ".tiff", ".gif", ".bmp")


def sha256_of(path: Path) -> str:
    h = hashlib.sha256()
    with path.open("rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def photo_dir(log_path: Path | str) -> Path:
    """The photo folder of the log file at ``log_path``."""
    p = Path(log_path)
    return p.parent / f"{p.stem}-photos"


def _suffix(path: Path) -> str:
    s = path.suffix.lower()
    return s if s in SUFFIXES else ".bin"


def _copy_verified(src: Path, dest_dir: Path, digest: str) -> Path | None:
    """Copy ``src`` into ``dest_dir`` as <digest><suffix>; the copy is kept only if its sha256
    on arrival is ``digest`` (None: it differed, nothing is left behind)."""
    dest_dir.mkdir(parents=True, exist_ok=True)
    target = dest_dir / f"{digest}{_suffix(src)}"
    if target.is_file() and sha256_of(target) == digest:
        return target
    fd, tmp = tempfile.mkstemp(prefix=f".{digest[:12]}.", suffix=".part", dir=dest_dir)
    try:
        with os.fdopen(fd, "wb") as out, src.open("rb") as inp:
            shutil.copyfileobj(inp, out, 1 << 20)
            out.flush()
            os.fsync(out.fileno())
        if sha256_of(Path(tmp)) != digest:
            Path(tmp).unlink(missing_ok=True)
            return None
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return target


def attach_photo(log, observation_id: str, photo: Path | str, caption: str = ""):
    """Copy ``photo`` into the log's photo folder and record it with ``caption`` (see module)."""
    src = Path(photo).expanduser()
    if not src.is_file():
        raise ValueError(
            f"photo {src} is not a file; give the path of a photo, e.g. ~/photos/P1.jpg"
        )
    if getattr(log, "readonly", False):
        raise ValueError(f"the survey log {log.path} was opened read-only; a photo cannot be added")
    log.observation(observation_id)  # an unknown revision is refused before any copy
    digest = sha256_of(src)
    kept = _copy_verified(src, photo_dir(log.path), digest)
    if kept is None:
        raise ValueError(f"photo {src} changed while it was being copied; attach it again")
    return log.attach(observation_id, kept, caption)


def photo_file(log, attachment) -> Path | None:
    """The file of ``attachment`` whose sha256 is the recorded one: in the log's photo folder
    (where sync puts it), else at the recorded path; None when neither is there and sound."""
    folder = photo_dir(log.path)
    candidates = sorted(folder.glob(f"{attachment.sha256}.*")) if folder.is_dir() else []
    candidates.append(Path(attachment.path))
    for c in candidates:
        with contextlib.suppress(OSError):
            if c.is_file() and sha256_of(c) == attachment.sha256:
                return c
    return None


@dataclass
class PhotoSync:
    sent: int = 0
    received: int = 0
    refused: list[str] = field(default_factory=list)  # sentences

    def sentence(self) -> str:
        return f"Photos: {self.sent} sent, {self.received} taken back" + (
            f", {len(self.refused)} refused." if self.refused else "."
        )


def _index(folder: Path) -> dict[str, Path]:
    """sha256 -> file of a photo folder (files named by their hash)."""
    if not folder.is_dir():
        return {}
    return {p.stem: p for p in folder.iterdir() if p.is_file() and len(p.stem) == 64}


def sync_photos(log, office: Path | str, progress=None) -> PhotoSync:
    """Carry photo files both ways after a sync of the rows (see the module docstring). A hub
    URL carries no files (the hub keeps rows only): nothing is done."""
    out = PhotoSync()
    text = str(office)
    if "://" in text:
        return out
    office = Path(office).expanduser()
    other = office / "photos" if office.is_dir() else photo_dir(office)
    mine = photo_dir(log.path)
    wanted = {a.sha256: a for a in log.attachments()}
    have_mine, have_other = _index(mine), _index(other)
    todo_send = [(d, p) for d, p in have_mine.items() if d in wanted and d not in have_other]
    todo_take = [(d, p) for d, p in have_other.items() if d in wanted and d not in have_mine]
    # a photo recorded here whose file is only at its original path is sent from there
    for d, a in wanted.items():
        if d not in have_mine and d not in have_other and d not in dict(todo_take):
            src = Path(a.path)
            if src.is_file():
                todo_send.append((d, src))
    total = len(todo_send) + len(todo_take)
    done = 0
    for digest, src in todo_send:
        if _copy_verified(src, other, digest) is None:
            out.refused.append(f"photo {src.name} differs from its recorded sha256; not sent")
        else:
            out.sent += 1
        done += 1
        if progress is not None:
            progress(done, total, "photos")
    for digest, src in todo_take:
        if _copy_verified(src, mine, digest) is None:
            out.refused.append(
                f"photo {src.name} from the office differs from its recorded sha256; not taken"
            )
        else:
            out.received += 1
        done += 1
        if progress is not None:
            progress(done, total, "photos")
    return out
