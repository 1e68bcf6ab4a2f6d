"""`fieldcheck office-key new|show|add|rotate|retire`: the key that signs sync bundles."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

DESCRIPTION = (
    "Manage the office key that signs sync bundles (HMAC-SHA256). In the office: `new` once, "
    "then `show` and give the line to each inspector, who runs `add KEY-ID SECRET` on their "
    "laptop. To rotate: `rotate` in the office (the new key signs, the old one is still "
    "accepted), `add` the new key on each laptop, and once every laptop has synced, `retire` "
    "the old keys everywhere. Keep the key private: anyone holding it can sign bundles."
)


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("action", choices=("new", "show", "add", "rotate", "retire"))
    p.add_argument("key", nargs="*", metavar="KEY-ID SECRET", help="with add: the office's key")
    p.add_argument("--key-file", metavar="PATH", help="key file (default: your config folder)")


def run(args: argparse.Namespace) -> int:
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.store import signing
    from fieldcheck.store.faults import os_sentence

    path = Path(args.key_file).expanduser() if args.key_file else signing.key_file()
    ring = signing.load(path)
    lines = signing.key_lines(ring) if ring else []
    if args.key and args.action != "add":
        raise UsageError(f"office-key {args.action} takes no key; only `add` does")
    if args.action == "new":
        if lines:
            raise UsageError(
                f"{path} already holds an office key; use `office-key rotate` for a new one"
            )
        lines = [signing.new_key_line()]
    elif args.action == "show":
        if not lines:
            raise UsageError(f"there is no office key at {path}; {signing.SETUP}")
        print("\n".join(lines))
        print(f"(from {path}; the first key signs)", file=sys.stderr)
        return 0
    elif args.action == "add":
        text = " ".join(args.key)
        added = signing.parse_keys(text, "the key given").keys
        ids = {k for k, _ in added}
        lines = signing.key_lines(signing.Keyring(added)) + [
            ln for ln in lines if ln.split()[0] not in ids
        ]
    elif args.action == "rotate":
        if not lines:
            raise UsageError(f"there is no office key at {path} to rotate; use `office-key new`")
        lines = [signing.new_key_line(), *lines]
    else:  # retire
        if not lines:
            raise UsageError(f"there is no office key at {path}")
        lines = lines[:1]
    try:
        signing.write_keys(lines, path)
    except OSError as exc:
        raise UsageError(os_sentence(exc, path)) from None
    key_id = lines[0].split()[0]
    print(
        f"Office key {key_id} signs bundles from {path} ({len(lines)} accepted).", file=sys.stderr
    )
    if args.action in ("new", "rotate"):
        print("Give each inspector this line for `fieldcheck office-key add`:", file=sys.stderr)
        print(lines[0])
    return 0
