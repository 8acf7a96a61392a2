"""The ``sizing`` console script: argument parsing, exit codes, printing.

Exit codes: 0 solved; 2 bad input (YAML, schema, units, values, output
locations); 3 infeasible requirement set; 130 stopped by Ctrl-C (SIGINT), 143
by SIGTERM; 1 anything else. No traceback unless --debug.
"""
from __future__ import annotations

import argparse
import os
import signal
import sys

from .common.caution import CAUTION

EXIT_OK, EXIT_ERROR, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="sizing",
        description="Requirement-driven conceptual aircraft sizing: constraint diagram, weight "
                    "closure and the lightest design point that meets every requirement.")
    p.add_argument("--debug", action="store_true", help="show tracebacks")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    # --debug is accepted after the command too (``sizing solve f.yaml --debug``)
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS, help="show tracebacks")

    s = sub.add_parser("solve", parents=[common], help="solve: design point, drivers, costs, margins")
    s.add_argument("file")
    s.add_argument("--json", action="store_true", help="print the result as one JSON object")

    d = sub.add_parser("diagram", parents=[common], help="constraint diagram (PNG, SVG, PDF by suffix)")
    d.add_argument("file")
    d.add_argument("-o", "--output", default="diagram.png")
    d.add_argument("--data", help="also write the sampled curves as CSV")
    d.add_argument("--units", choices=("si", "us"), default="si")
    _figure_options(d)

    st = sub.add_parser("study", parents=[common], help="trade study: sweeps or Monte Carlo sampling")
    st.add_argument("file")
    st.add_argument("-o", "--output", default="out")
    st.add_argument("--workers", type=int, default=None, help="local processes (default: all cores)")
    st.add_argument("--dask", metavar="ADDRESS", help="run on a Dask distributed scheduler")
    st.add_argument("--limit", type=int, default=None, help="run only the first N points (quick checks)")
    st.add_argument("--xlsx", action="store_true", help="also write results.xlsx (the table, units in the "
                                                        "headers, the caution on every sheet)")
    st.add_argument("--progress", action="store_true", default=None,
                    help="show the progress bar even when stderr is not a terminal (logs)")

    e = sub.add_parser("envelope", parents=[common], help="altitude-Mach envelope check of the sized design, "
                                                           "coffin corner and zoom")
    e.add_argument("file")
    e.add_argument("-o", "--output", default=None, help="figure, PNG/SVG/PDF by suffix (default envelope.png)")
    e.add_argument("--data", help="also write the envelope table as CSV")
    e.add_argument("--weight-fraction", type=float, default=None)
    e.add_argument("--speed", choices=("mach", "cas", "tas"), default=None,
                   help="horizontal axis: Mach number, or calibrated or true airspeed in knots with lines of "
                        "constant Mach (default: cas for propeller aircraft, mach otherwise)")
    e.add_argument("--units", choices=("si", "us"), default="si",
                   help="Ps contours in m/s (si) or ft/min (us); altitudes are in ft either way")
    e.add_argument("--json", action="store_true", help="print ceilings, top speeds, coffin corner and zoom as JSON "
                                                       "(files only when -o/--data are given)")

    charts = (("vn", "load-factor (V-n) chart: manoeuvring and gust envelope, design speeds", "vn.png"),
              ("turn", "turn chart: sustained and instantaneous turn rate, corner speed", "turn.png"),
              ("wat", "hot-and-high limits: largest takeoff mass by airfield elevation and temperature", "wat.png"),
              ("payload-range", "payload-range diagram of a design sized by its mission", "payload-range.png"))
    for name, text, default in charts:
        c = sub.add_parser(name, parents=[common], help=text, description=text)
        c.add_argument("file")
        c.add_argument("-o", "--output", default=None, help=f"figure, PNG/SVG/PDF by suffix (default {default})")
        c.add_argument("--data", help="also write the chart's data as CSV (units in the column names)")
        c.add_argument("--json", action="store_true", help="print the summary as JSON (files only when -o/--data "
                                                           "are given)")
        if name in ("vn", "turn"):
            c.add_argument("--weight-fraction", type=float, default=None, help="weight over takeoff weight (default 1)")
        if name == "vn":
            c.add_argument("--altitude", default="0 ft", help="pressure altitude with a unit (default '0 ft')")
        if name == "turn":
            c.add_argument("--altitude", default=None, help="pressure altitudes, e.g. '0, 15000 ft' (default: sea "
                                                            "level and the turn requirements' altitudes)")
        if name == "wat":
            c.add_argument("--elevations", default=None, help="airfield elevations, e.g. '0, 4000, 8000 ft' "
                                                              "(default 0 to 10,000 ft every 2,000 ft)")
            c.add_argument("--temperatures", default=None, help="outside air temperatures, e.g. '0, 15, 30, 45 C' "
                                                                "or '59, 95 F' (default 0, 15, 30, 45 C)")

    r = sub.add_parser("report", parents=[common], help="self-contained review report (HTML or Markdown)")
    r.add_argument("file")
    r.add_argument("-o", "--output", default="review.html")
    r.add_argument("--format", choices=("html", "md"), default=None)
    r.add_argument("--revision", default=None, help="the revision of the design or document this report belongs "
                                                    "to, printed in its header (e.g. 'B' or '2025-03 review')")
    _figure_options(r)

    ex = sub.add_parser("export", parents=[common], help="spreadsheet of the design (.xlsx): design point, "
                                                          "weights, requirements, diagram curves, inputs")
    ex.add_argument("file")
    ex.add_argument("-o", "--output", default="design.xlsx", help="workbook path (.xlsx)")

    c = sub.add_parser("check", parents=[common], help="validate a requirement file only")
    c.add_argument("file")

    x = sub.add_parser("explore", parents=[common], help="live what-if page in the browser (local server)")
    x.add_argument("file")
    x.add_argument("--port", type=int, default=5006, help="TCP port on 127.0.0.1 (default 5006; 0 picks a free one)")

    sc = sub.add_parser("schema", parents=[common], help="print the JSON Schema of requirement files (for editors)")
    sc.add_argument("-o", "--output", default=None, help="write it to this file instead of printing it")
    return p


def _figure_options(p):
    p.add_argument("--labels", choices=("short", "full"), default="short",
                   help="curve labels: the id (short) or the id and its condition: altitude, Mach or airspeed, "
                        "load factor, weight fraction (full)")
    p.add_argument("--range", dest="view", choices=("auto", "full"), default="auto",
                   help="diagram axes: zoomed on the design point and the curves that matter (auto) or every "
                        "curve's minimum and every W/S limit (full)")


def _solve(path):
    from .inputs.spec import load

    spec = load(path, cache=True)  # bad input is reported before the optimizer is even imported
    from .problem import solve

    return spec, solve(spec)


def cmd_solve(args) -> int:
    spec, res = _solve(args.file)
    if args.json:
        from .reports.serialize import to_json

        print(to_json(res))
    else:
        from .reports.summary import summary

        print(summary(res, args.file))
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def cmd_check(args) -> int:
    from .inputs.spec import load

    spec = load(args.file)
    print(f"{args.file}: valid ({len(spec.requirements)} requirements, "
          f"{spec.model.aircraft.propulsion.type}, objective {spec.model.objective})")
    print(CAUTION)
    return EXIT_OK


def cmd_schema(args) -> int:
    import json

    from .inputs.spec import json_schema

    text = json.dumps(json_schema(), indent=2) + "\n"
    if args.output:
        from .common.fileio import atomic_write

        atomic_write(args.output, text, "w")
        print(f"wrote {args.output}")
    else:
        sys.stdout.write(text)
    return EXIT_OK


def _outputs_writable(*paths):
    """Every output path checked before the solve (a folder, a read-only place: exit 2)."""
    from .common.fileio import check_writable

    for p in paths:
        if p:
            check_writable(p)


def cmd_diagram(args) -> int:
    from .charts.diagram import write_diagram

    _outputs_writable(args.output, args.data)
    spec, res = _solve(args.file)
    written = write_diagram(spec, res, args.output, data=args.data, units=args.units, labels=args.labels,
                            view=args.view)
    for w in written:
        print(f"wrote {w}")
    print(CAUTION)
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def cmd_report(args) -> int:
    from .reports.review import report_format, write_report

    _outputs_writable(args.output)
    fmt = report_format(args.output, args.format)
    spec, res = _solve(args.file)
    path = write_report(spec, res, args.output, fmt=fmt, revision=args.revision, labels=args.labels,
                        view=args.view)
    print(f"wrote {path}")
    print(CAUTION)
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def cmd_export(args) -> int:
    from pathlib import Path

    from .common.errors import InputError

    if Path(args.output).suffix.lower() != ".xlsx":
        raise InputError(f"{args.output!r}: the export is an Excel workbook, so name it .xlsx (got "
                         f"{Path(args.output).suffix or 'no suffix'})", field="-o/--output")
    _outputs_writable(args.output)
    spec, res = _solve(args.file)
    from .reports.workbook import write_workbook

    print(f"wrote {write_workbook(spec, res, args.output)}")
    print(CAUTION)
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def _solved_for_chart(args, default):
    """(spec, result) of a chart command, or the exit code when the set is infeasible; checks -o first."""
    from .charts.files import check_output

    if args.output is None and not args.json:
        args.output = default
    if args.output is not None:
        check_output(args.output)
    _outputs_writable(args.output, args.data)
    spec, res = _solve(args.file)
    if not res.feasible:
        from .reports.summary import summary

        print(summary(res, args.file), file=sys.stderr if args.json else sys.stdout)
        return None, EXIT_INFEASIBLE
    return spec, res


def _chart_output(args, chart, write, text):
    """Print the table (or the JSON object) and write the requested files."""
    from .charts.files import json_text

    if args.json:
        print(json_text(chart.as_dict()))
    else:
        print(text)
    if args.output is not None:
        written = write(chart, args.output, args.data)
    elif args.data:
        from .charts.files import csv_text
        from .common.fileio import atomic_write

        written = [str(atomic_write(args.data, csv_text(chart.to_frame(), chart.title), "w"))]
    else:
        written = []
    if not args.json:
        print("\n".join(f"wrote {w}" for w in written) + ("\n" if written else "") + CAUTION)
    return EXIT_OK


def cmd_envelope(args) -> int:
    spec, res = _solved_for_chart(args, "envelope.png")
    if spec is None:
        return res
    from .charts.envelope import compute_envelope, status_text
    from .charts.envelope_plot import write_envelope

    env = compute_envelope(spec, res, args.weight_fraction)
    text = (env.table_text() + "\n\nRequirements at their own conditions\n" +
            "\n".join(f"  {p.id:<18} {status_text(p):<16} {p.detail}   [{p.conditions}]" for p in env.points) + "\n")
    from functools import partial

    return _chart_output(args, env, partial(write_envelope, speed=args.speed, units=args.units), text)


def _length(text, field):
    from .common.errors import InputError
    from .inputs.units import UnitError, parse_list

    try:
        return parse_list(text, "length")
    except UnitError as e:
        raise InputError(str(e), field=field) from None


def cmd_vn(args) -> int:
    spec, res = _solved_for_chart(args, "vn.png")
    if spec is None:
        return res
    from .charts.loads import compute_vn
    from .charts.loads_plot import write_vn
    from .common.errors import InputError

    alt = _length(args.altitude, "--altitude")
    if len(alt) != 1:
        raise InputError(f"give one altitude, got {len(alt)}", field="--altitude")
    vn = compute_vn(spec, res, alt[0], args.weight_fraction)
    return _chart_output(args, vn, write_vn, vn.table_text())


def cmd_turn(args) -> int:
    spec, res = _solved_for_chart(args, "turn.png")
    if spec is None:
        return res
    from .charts.turn import compute_turn
    from .charts.turn_plot import write_turn

    alts = None if args.altitude is None else _length(args.altitude, "--altitude")
    chart = compute_turn(spec, res, alts, args.weight_fraction)
    return _chart_output(args, chart, write_turn, chart.table_text())


def cmd_wat(args) -> int:
    spec, res = _solved_for_chart(args, "wat.png")
    if spec is None:
        return res
    from .charts.hot_high import compute_wat
    from .charts.hot_high_plot import write_wat
    from .common.errors import InputError
    from .inputs.units import UnitError, parse_temperatures

    hs = None if args.elevations is None else _length(args.elevations, "--elevations")
    try:
        ts = None if args.temperatures is None else parse_temperatures(args.temperatures)
    except UnitError as e:
        raise InputError(str(e), field="--temperatures") from None
    chart = compute_wat(spec, res, hs, ts)
    return _chart_output(args, chart, write_wat, chart.table_text())


def cmd_payload_range(args) -> int:
    from .charts.payload_range import cruise_segment
    from .inputs.spec import load

    cruise_segment(load(args.file))          # no mission, no diagram: said before solving
    spec, res = _solved_for_chart(args, "payload-range.png")
    if spec is None:
        return res
    from .charts.payload_range import compute_payload_range
    from .charts.payload_range_plot import write_payload_range

    chart = compute_payload_range(spec, res)
    return _chart_output(args, chart, write_payload_range, chart.table_text())


def cmd_study(args) -> int:
    from .studies.definition import load_study
    from .studies.plots import output_folder, summary, write_outputs
    from .studies.runner import run_study

    study = load_study(args.file)            # bad input first, then the output folder, then the work
    with output_folder(args.output) as folder:
        result = run_study(study, workers=args.workers, dask=args.dask, limit=args.limit, progress=args.progress)
        written = write_outputs(result, args.output, folder, xlsx=args.xlsx)
    print(summary(result))
    for w in written:
        print(f"wrote {w}")
    print(CAUTION)
    return EXIT_OK


def cmd_explore(args) -> int:
    from .explore.server import serve

    return serve(args.file, port=args.port)


COMMANDS = {"solve": cmd_solve, "check": cmd_check, "schema": cmd_schema, "diagram": cmd_diagram,
            "report": cmd_report, "envelope": cmd_envelope, "study": cmd_study,
            "explore": cmd_explore, "vn": cmd_vn, "turn": cmd_turn, "wat": cmd_wat,
            "payload-range": cmd_payload_range, "export": cmd_export}


def main(argv=None) -> int:
    args = _parser().parse_args(argv)
    debug = getattr(args, "debug", False)
    from .common import stop
    from .common.errors import InputError, SizingError

    try:
        with stop.handling():
            try:
                return COMMANDS[args.command](args)
            except Exception:
                # a stop request raised inside C code comes back as another error (a
                # SystemError from a conversion, a failed solve): it is still the stop
                stop.check()
                raise
    except InputError as e:
        if debug:
            raise
        print(f"error: {e.describe()}", file=sys.stderr)
        return EXIT_INPUT
    except SizingError as e:
        if debug:
            raise
        print(f"error: {e}", file=sys.stderr)
        return EXIT_ERROR
    except KeyboardInterrupt as e:
        # every output is written whole or not at all (atomic files, a study's folder
        # swapped in at the end), so a stop leaves nothing half-written
        signum = getattr(e, "signum", signal.SIGINT)
        print(f"interrupted: {stop.Interrupted(signum)}; no further output was written", file=sys.stderr)
        return 128 + signum
    except BrokenPipeError:      # output piped into head and the like
        try:
            sys.stdout = open(os.devnull, "w")
        except OSError:
            pass
        return EXIT_ERROR
    except Exception as e:  # noqa: BLE001 - the CLI never shows a traceback without --debug
        if debug:
            raise
        print(f"error: unexpected failure ({type(e).__name__}: {e}); rerun with --debug for details",
              file=sys.stderr)
        return EXIT_ERROR


if __name__ == "__main__":
    sys.exit(main())
