"""`siderod enlist NAME --into FILE`: add a deep-sky catalogue entry to a target file, keeping the rest."""

from __future__ import annotations

import argparse
import sys

__all__ = ["register", "run"]


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add ``enlist`` to the command line."""
    parser = subparsers.add_parser(
        "enlist",
        help="add a deep-sky catalogue entry to a target file (comments and layout kept)",
        description="Look NAME up in the deep-sky catalogue and append a [[target]] table for it to FILE. "
        "Everything already in the file is kept exactly; the file is replaced atomically, and only "
        "if it still loads. A name already in the file is refused.",
    )
    parser.add_argument("name", metavar="NAME", help='a catalogue name: "M 31", "NGC 7000", "Crab Nebula"')
    parser.add_argument("--into", required=True, metavar="FILE",
                        help="the target file (.toml) to add to; created when it does not exist")
    parser.add_argument("--as", dest="nickname", metavar="NAME",
                        help="the target's own name (then a catalogue key names the entry)")
    parser.add_argument("--pin", action="store_true",
                        help="also write the entry's J2000 ra/dec, so the file does not need the catalogue")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """0 when added; 1 when refused or not found (the file is then unchanged)."""
    from pathlib import Path

    from siderod.common.errors import CatalogueNameError
    from siderod.files.catalogue import open_catalogue
    from siderod.files.enlist import EnlistRefused, add_target_text, replace_file_atomically

    path = Path(args.into).expanduser()
    if path.suffix.lower() != ".toml":
        print(f"siderod enlist: --into: expected a .toml target file, got {args.into!r}", file=sys.stderr)
        return 1
    try:
        entry = open_catalogue().find(args.name)
    except CatalogueNameError as exc:
        print(f"siderod enlist: {exc}; nothing was changed", file=sys.stderr)
        return 1
    try:
        text = path.read_text(encoding="utf-8") if path.exists() else ""
    except (OSError, UnicodeDecodeError) as exc:
        print(f"siderod enlist: cannot read {path}: {exc}; nothing was changed", file=sys.stderr)
        return 1
    try:
        new_text = add_target_text(text, str(path), entry, name=args.nickname, pin=args.pin)
    except EnlistRefused as exc:
        print(f"siderod enlist: {exc}", file=sys.stderr)
        return 1
    replace_file_atomically(path, new_text)
    added = new_text[len(text):].strip("\n")
    print(f"added to {path}:")
    print("\n".join("  " + line for line in added.splitlines()))
    if not path.exists() or not text:
        print(f"(add {path.name!r} to [targets] files in the configuration if it is not there yet)")
    return 0
