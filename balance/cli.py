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


def _refuse_existing(paths, overwrite: bool, key: str) -> None:
    from balance.errors import InputError
    existing = [str(p) for p in paths if os.path.exists(p)]
    if existing and not overwrite:
        raise InputError(f"exists already: {', '.join(existing)}; choose another name or pass --overwrite",
                         key=key)


def cmd_report(args) -> int:
    from balance.errors import InputError
    from balance.report.html import read_sweep_rows, sweep_plot_specs, write_figures, write_report
    from balance.solve import solve
    if args.format and not args.figures:
        raise InputError("--format applies to --figures DIR; give a folder for the figures", key="--format")
    if args.plot and not args.sweep:
        raise InputError("--plot needs --sweep ROWS (the rows a sweep wrote)", key="--plot")
    output = args.output or os.path.splitext(os.path.basename(args.file))[0] + ".html"
    _refuse_existing([output], args.overwrite, "--output")
    sweeps = sweep_plot_specs(read_sweep_rows(args.sweep), args.plot) if args.sweep else None
    fs = _load(args)
    solution = solve(fs, method=args.method, range_policy=args.ranges)
    if args.figures:
        for path in write_figures(solution, args.figures, format=args.format or "svg",
                                  overwrite=args.overwrite, sweeps=sweeps):
            print(f"wrote {path}")
    write_report(solution, output, overwrite=args.overwrite, sweeps=sweeps)
    print(f"wrote {output}")
    if not solution.converged:
        print(f"warning: {solution.status}; the report marks its numbers as not a solution", file=sys.stderr)
    return 0 if solution.converged else 1


def cmd_export(args) -> int:
    from balance.errors import InputError
    from balance.report.exports import TABLE_FILES, write_csv, write_json, write_xlsx
    from balance.solve import solve
    if not (args.csv or args.xlsx or args.json):
        raise InputError("say what to write: --csv DIR, --xlsx FILE and/or --json FILE", key="export")
    targets = [os.path.join(args.csv, name) for name in TABLE_FILES.values()] if args.csv else []
    targets += [p for p in (args.xlsx, args.json) if p]
    _refuse_existing(targets, args.overwrite, "export")
    fs = _load(args)
    solution = solve(fs, method=args.method, range_policy=args.ranges)
    written = []
    if args.csv:
        written += write_csv(solution, args.csv, si=args.si, overwrite=args.overwrite)
    if args.xlsx:
        written.append(write_xlsx(solution, args.xlsx, si=args.si, overwrite=args.overwrite))
    if args.json:
        written.append(write_json(solution, args.json, si=args.si, overwrite=args.overwrite))
    for path in written:
        print(f"wrote {path}")
    if not solution.converged:
        print(f"warning: {solution.status}; the numbers written are not a solution", file=sys.stderr)
    return 0 if solution.converged else 1


def cmd_compare(args) -> int:
    import shutil
    from balance.analysis.compare import compare, load_variants
    targets = [p for p in (args.csv, args.json) if p]
    _refuse_existing(targets, args.overwrite, "compare")
    comparison = compare(load_variants(args.files), method=args.method, range_policy=args.ranges)
    print(comparison.text(width=args.width or shutil.get_terminal_size((160, 24)).columns))
    if args.csv:
        _write_new(args.csv, comparison.to_csv(), args.overwrite)
        print(f"wrote {args.csv}")
    if args.json:
        _write_new(args.json, comparison.to_json(), args.overwrite)
        print(f"wrote {args.json}")
    if not comparison.all_converged:
        print("warning: some variants did not solve; their columns are empty", file=sys.stderr)
    return 0 if comparison.all_converged else 1


def cmd_sweep(args) -> int:
    from balance.analysis import sweep
    if sweep.is_sweep_file(args.file):
        if args.fix or args.free:
            from balance.errors import InputError
            raise InputError("--fix and --free go with a flowsheet file; in a sweep file use [sweep] fix/free",
                             file=args.file)
        spec = sweep.load_sweep(args.file)
        source, parameters = spec.source, list(spec.parameters)
        sampling, samples, seed = spec.sampling, spec.samples, spec.seed
        fs = source.flowsheet()
    else:
        fs = _load(args)
        source = sweep.ModelSource.from_flowsheet(fs)
        parameters, sampling, samples, seed = [], "grid", None, 0
    parameters += [sweep.parse_vary(fs, text) for text in args.vary or []]
    if args.random is not None:
        sampling, samples = "random", args.random
    if args.seed is not None:
        seed = args.seed
    if args.output:
        _refuse_existing([args.output], args.overwrite, "sweep")
    progress = sys.stderr.isatty() if args.progress is None else args.progress
    result = sweep.run_sweep(source, parameters, sampling=sampling, samples=samples, seed=seed,
                             outputs=args.output_figure or (), key_figures=not args.no_key_figures,
                             checks="exact" if args.exact_checks else "screen",
                             executor="dask" if args.dask_scheduler else "auto", workers=args.workers,
                             dask_scheduler=args.dask_scheduler, chunk_size=args.chunk_size,
                             compile=args.compile, progress=progress)
    if args.output:
        result.write(args.output, units=args.units, overwrite=args.overwrite)
        print(f"wrote {args.output}", file=sys.stderr)
    else:
        result.write_csv(sys.stdout, args.units)
    print(result.summary(), file=sys.stderr)
    return 0


def cmd_benchmark(args) -> int:
    from balance.analysis.benchmark import run_benchmark
    if args.json:
        _refuse_existing([args.json], args.overwrite, "benchmark")
    report = run_benchmark(quick=args.quick, parts=args.part, sizes=args.sizes, sweep_cases=args.sweep_cases)
    print(report.text())
    if args.json:
        _write_new(args.json, report.to_json(), args.overwrite)
        print(f"wrote {args.json}")
    return 0

def cmd_optimise(args) -> int:
    from balance.analysis.optimise import Optimiser
    from balance.report.tables import text_report
    fs = _load(args)
    result = Optimiser(fs, objective=args.objective).solve()
    print(result.text)
    if args.solution and result.solution is not None:
        print()
        print(text_report(result.solution))
    return 0 if result.converged else 1


def cmd_capacity(args) -> int:
    from balance.analysis.capacity import capacity_study
    from balance.flowsheet.file_format import parse_path_value
    fs = _load(args)
    throughput = args.throughput
    up_to = None
    if args.up_to:
        from balance.analysis.capacity import _throughput
        path = throughput or _throughput(fs, dict(fs.extras.get("capacity", {}) or {}))
        up_to = parse_path_value(fs, path, args.up_to)
    study = capacity_study(fs, throughput=throughput, up_to=up_to, method=args.method, steps=args.steps)
    print(study.text)
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

    def solve_options(p):
        p.add_argument("--method", default="auto", choices=("auto", "newton", "ipopt"),
                       help="numerical method (default: auto = Newton, then IPOPT within bounds)")
        p.add_argument("--ranges", default="warn", choices=("warn", "refuse"),
                       help="what to do when a correlation is used outside its validity range")
        p.add_argument("--overwrite", action="store_true", help="allow replacing files that exist")

    p = sub.add_parser("report", help="solve and write a self-contained HTML report with figures")
    common(p)
    p.add_argument("--output", "-o", metavar="OUT.html",
                   help="the report file (default: the flowsheet's name with .html, in this folder)")
    p.add_argument("--figures", metavar="DIR", help="also write each figure as a file into this folder")
    p.add_argument("--format", choices=("svg", "png"), help="format of --figures (default svg; png needs "
                   "the 'report' extra)")
    p.add_argument("--sweep", metavar="ROWS", help="rows of a sweep (CSV, or Parquet with pandas) to plot")
    p.add_argument("--plot", action="append", metavar="X:Y[:BY]",
                   help="with --sweep: plot column Y against column X, one line per value of BY (repeatable)")
    solve_options(p)
    p.set_defaults(func=cmd_report)

    p = sub.add_parser("export", help="solve and write the stream table, unit table and key figures")
    common(p)
    p.add_argument("--csv", metavar="DIR", help="write streams.csv, units.csv and key_figures.csv here")
    p.add_argument("--xlsx", metavar="FILE", help="write one workbook, a sheet per table (needs openpyxl)")
    p.add_argument("--json", metavar="FILE", help="write the tables as JSON")
    p.add_argument("--si", action="store_true", help="values in SI units (kg/s, K, Pa, W) instead of kg/h, "
                   "°C, kPa, kW")
    solve_options(p)
    p.set_defaults(func=cmd_export)

    p = sub.add_parser("compare", help="solve several flowsheets, or one with [variants], and compare them "
                                       "per tonne of water evaporated and per tonne of product")
    p.add_argument("files", nargs="+", metavar="FILE", help="flowsheet files (TOML); the first is the base")
    p.add_argument("--csv", metavar="OUT.csv", help="also write the table as CSV")
    p.add_argument("--json", metavar="OUT.json", help="also write the comparison as JSON")
    p.add_argument("--width", type=int, metavar="CHARS",
                   help="split the table into blocks this wide (default: the terminal's width)")
    solve_options(p)
    p.set_defaults(func=cmd_compare)

    p = sub.add_parser("sweep", help="solve many cases over ranges or lists of fixed values; one row per case "
                                     "(docs/sweeps.md)",
                       description="FILE is a flowsheet file, or a sweep file with a [sweep] table naming one.")
    common(p)
    p.add_argument("--vary", action="append", metavar="PATH=SPEC",
                   help="a fixed value to vary: 'feed.flow=15 t/h:25 t/h:11' (11 points from 15 to 25 t/h) or "
                        "'steam.pressure=0.9 bar,1 bar,1.2 bar' (a list); repeatable, combined as a grid")
    p.add_argument("--random", type=int, metavar="N", help="draw N random cases within the ranges instead of "
                   "the full grid")
    p.add_argument("--seed", type=int, help="seed of --random (default 0)")
    p.add_argument("--output", "-o", metavar="OUT.csv|OUT.parquet",
                   help="write the rows here (default: CSV on standard output)")
    p.add_argument("--overwrite", action="store_true", help="allow --output to replace an existing file")
    p.add_argument("--units", default="display", choices=("display", "si"),
                   help="numbers in display units (kg/h, °C, kPa, kW; default) or in SI (kg/s, K, Pa, W)")
    p.add_argument("--output-figure", action="append", metavar="PATH",
                   help="add a column: a variable (E1.area, V2.pressure) or unit figure (E2.driving_force)")
    p.add_argument("--no-key-figures", action="store_true",
                   help="leave out the key figures (much faster: they are computed case by case)")
    p.add_argument("--exact-checks", action="store_true",
                   help="run the result checks case by case instead of vectorised over each batch (slower; "
                        "the same verdicts)")
    p.add_argument("--workers", type=int, metavar="N", help="local worker processes (default: all cores)")
    p.add_argument("--dask-scheduler", metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://scheduler-host:8786 (needs dask[distributed])")
    p.add_argument("--chunk-size", type=int, default=500, metavar="N", help="cases per batch (default 500)")
    p.add_argument("--compile", default="auto", choices=("auto", "always", "never"),
                   help="compile the batch Newton to C with the system compiler (auto: when it pays or is "
                        "cached)")
    p.add_argument("--progress", dest="progress", action="store_true", default=None,
                   help="show a progress bar (default: when standard error is a terminal)")
    p.add_argument("--no-progress", dest="progress", action="store_false", help="no progress bar")
    p.set_defaults(func=cmd_sweep)

    p = sub.add_parser("benchmark", help="measure build, solve and sweep times against a hand-written baseline "
                                         "(docs/benchmark.md)")
    p.add_argument("--quick", action="store_true", help="small sizes and fewer repeats (about 20-30 s)")
    p.add_argument("--part", action="append", metavar="NAME",
                   help="run only these parts (repeatable): three_effect, baseline, scaling, sweep, memory, "
                        "cold_start, drying, variants, optimise")
    p.add_argument("--sizes", type=int, nargs="+", metavar="N",
                   help="numbers of effects for the scaling part (default 2 4 8 16 32 64)")
    p.add_argument("--sweep-cases", type=int, metavar="N", help="cases in the throughput sweeps")
    p.add_argument("--json", metavar="OUT.json", help="also write every figure as JSON")
    p.add_argument("--overwrite", action="store_true", help="allow --json to replace an existing file")
    p.set_defaults(func=cmd_benchmark)

    p = sub.add_parser("optimise", help="optimise the line over its own equations within its [limits] "
                                        "(docs/optimisation-and-capacity.md)")
    common(p)
    p.add_argument("--objective", metavar="NAME",
                   help="least live steam, least energy cost, least annual cost or most feed "
                        "(default: [optimise] objective)")
    p.add_argument("--solution", action="store_true", help="also print the full balance at the optimum")
    p.set_defaults(func=cmd_optimise)

    p = sub.add_parser("capacity", help="raise the throughput of an existing line until its [limits] bind; "
                                        "rank the bottlenecks (docs/optimisation-and-capacity.md)")
    common(p)
    p.add_argument("--throughput", metavar="PATH", help="the fixed value raised (default: [capacity] "
                   "throughput, or the flow of the only feed)")
    p.add_argument("--up-to", metavar="VALUE", help="highest throughput studied, e.g. '40 t/h' "
                   "(default: [capacity] up_to, or twice today's)")
    p.add_argument("--method", choices=("sweep", "optimise"),
                   help="sweep: raise the rate along the operating line (default); optimise: maximise it by "
                        "IPOPT, with the [optimise] vary decisions")
    p.add_argument("--steps", type=int, metavar="N", help="sweep steps (default 24)")
    p.set_defaults(func=cmd_capacity)
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
