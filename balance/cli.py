"""The command line: ``balance solve FILE``, ``balance check FILE``. Argument handling only."""

from __future__ import annotations

import argparse
import os
import sys

from balance import __version__
from balance.errors import BalanceError


def _apply_overrides(fs, fixes: list[str], frees: list[str]) -> None:
    from balance.flowsheet.file_format import parse_path_value
    from balance.errors import InputError
    for item in fixes or []:
        if "=" not in item:
            raise InputError(f"--fix expects PATH=VALUE, e.g. feed.flow='25 t/h'; got {item!r}", key="--fix")
        path, value = item.split("=", 1)
        fs.fix(path.strip(), parse_path_value(fs, path.strip(), value.strip()))
    for path in frees or []:
        fs.free(path.strip())


def _load(args):
    from balance.flowsheet.file_format import load
    fs = load(args.file)
    _apply_overrides(fs, getattr(args, "fix", None), getattr(args, "free", None))
    return fs


def cmd_solve(args) -> int:
    from balance.report.json_layout import to_json
    from balance.report.tables import text_report
    from balance.solve import solve
    fs = _load(args)
    solution = solve(fs, method=args.method, range_policy=args.ranges)
    if args.json:
        text = to_json(solution)
        if args.output:
            _write_new(args.output, text, args.overwrite)
        else:
            print(text)
    else:
        print(text_report(solution))
    return 0 if solution.converged else 1


def _write_new(path: str, text: str, overwrite: bool) -> None:
    from balance.errors import InputError
    if os.path.exists(path) and not overwrite:
        raise InputError("exists already; choose another name or pass --overwrite", file=path)
    with open(path, "w", encoding="utf-8") as handle:
        handle.write(text)


def cmd_check(args) -> int:
    from balance.equations.diagnostics import check_report
    fs = _load(args)
    text, ok = check_report(fs)
    print(text)
    return 0 if ok else 1


def cmd_units(args) -> int:
    from balance.unitops import UNIT_TYPES
    from balance.unitops.describe import describe_unit_type
    from balance.errors import InputError
    names = args.types or sorted(UNIT_TYPES)
    for name in names:
        if name not in UNIT_TYPES:
            raise InputError(f"unknown unit type {name!r}; valid types: {', '.join(sorted(UNIT_TYPES))}",
                             key="type")
        print(describe_unit_type(UNIT_TYPES[name]))
        print()
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="balance",
        description="Mass, solids, moisture and energy balances of evaporator and dryer lines, "
                    "solved simultaneously.")
    parser.add_argument("--version", action="version", version=f"balance {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)

    def common(p):
        p.add_argument("file", help="flowsheet file (TOML)")
        p.add_argument("--fix", action="append", metavar="PATH=VALUE",
                       help="fix a variable, e.g. --fix 'feed.flow=25 t/h' (repeatable)")
        p.add_argument("--free", action="append", metavar="PATH",
                       help="leave a variable to be solved, e.g. --free feed.flow (repeatable)")

    p = sub.add_parser("solve", help="solve a flowsheet and print its balance")
    common(p)
    p.add_argument("--json", action="store_true", help="print every figure as JSON (docs/json-layout.md)")
    p.add_argument("--output", "-o", help="write the JSON to this new file instead of printing it")
    p.add_argument("--overwrite", action="store_true", help="allow --output to replace an existing file")
    p.add_argument("--method", default="auto", choices=("auto", "newton", "ipopt"),
                   help="numerical method (default: auto = Newton, then IPOPT within bounds)")
    p.add_argument("--ranges", default="warn", choices=("warn", "refuse"),
                   help="what to do when a correlation is used outside its validity range")
    p.set_defaults(func=cmd_solve)

    p = sub.add_parser("check", help="validate a flowsheet and count its degrees of freedom, without solving")
    common(p)
    p.set_defaults(func=cmd_check)

    p = sub.add_parser("units", help="list unit types with their ports, quantities and settings")
    p.add_argument("types", nargs="*", help="unit types to describe (default: all)")
    p.set_defaults(func=cmd_units)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except BalanceError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
