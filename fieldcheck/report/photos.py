"""Reduced copies of the survey's photos, embedded in the report as data URIs (Pillow).

A photo is shown only when its file's SHA-256 is the one recorded when it was attached (the log
finds the file: ``Log.photo_file``); a reduced JPEG of at most ``MAX_PX`` on its long side keeps a
report of many photos small enough to e-mail.
"""

from __future__ import annotations

import base64
import io
from pathlib import Path

MAX_PX = 640  # long side of the embedded copy (judgement: readable on A4 at half width)
QUALITY = 72


def reduced_jpeg(path: Path, max_px: int = MAX_PX) -> bytes | None:
    """The photo at ``path`` as a reduced JPEG (turned upright by its EXIF orientation), or None
    when Pillow cannot read it."""
    from PIL import Image, ImageOps, UnidentifiedImageError

    try:
        with Image.open(path) as im:
            im = ImageOps.exif_transpose(im)
            im.thumbnail((max_px, max_px))
            if im.mode not in ("RGB", "L"):
                im = im.convert("RGB")
            buf = io.BytesIO()
            im.save(buf, "JPEG", quality=QUALITY, optimize=True)
            return buf.getvalue()
    except (OSError, UnidentifiedImageError, ValueError):
        return None


def data_uri(path: Path, max_px: int = MAX_PX) -> str | None:
    data = reduced_jpeg(path, max_px)
    if data is None:
        return None
    return "data:image/jpeg;base64," + base64.b64encode(data).decode("ascii")
