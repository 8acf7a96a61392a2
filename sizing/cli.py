"""The ``sizing`` console script: argument parsing, exit codes, printing.

Exit codes: 0 solved; 2 bad input (YAML, schema, units, values); 3
infeasible requirement set; 1 anything else. No traceback unless --debug.
"""
from __future__ import annotations

import argparse
import os
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

    st = sub.add_parser("study", parents=[common], help="trade study: sweeps or Monte Carlo sampling")
    st.add_argument("file")
    st.add_argument("-o", "--output", default="out")
    st.add_argument("--workers", type=int, default=None, help="local processes (default: all cores)")
    st.add_argument("--dask", metavar="ADDRESS", help="run on a Dask distributed scheduler")
    st.add_argument("--limit", type=int, default=None, help="run only the first N points (quick checks)")

    e = sub.add_parser("envelope", parents=[common], help="altitude-Mach envelope check of the sized design")
    e.add_argument("file")
    e.add_argument("-o", "--output", default="envelope.png")
    e.add_argument("--data", help="also write the envelope table as CSV")
    e.add_argument("--weight-fraction", type=float, default=None)

    r = sub.add_parser("report", parents=[common], help="self-contained review report (HTML or Markdown)")
    r.add_argument("file")
    r.add_argument("-o", "--output", default="review.html")
    r.add_argument("--format", choices=("html", "md"), default=None)

    c = sub.add_parser("check", parents=[common], help="validate a requirement file only")
    c.add_argument("file")

    x = sub.add_parser("explore", parents=[common], help="live what-if page in the browser (local server)")
    x.add_argument("file")
    x.add_argument("--port", type=int, default=5006, help="TCP port on 127.0.0.1 (default 5006; 0 picks a free one)")

    sc = sub.add_parser("schema", parents=[common], help="print the JSON Schema of requirement files (for editors)")
    sc.add_argument("-o", "--output", default=None, help="write it to this file instead of printing it")
    return p


def _solve(path):
    from .inputs.spec import load

    spec = load(path)        # bad input is reported before the optimizer is even imported
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


def cmd_diagram(args) -> int:
    from .charts.diagram import write_diagram

    spec, res = _solve(args.file)
    written = write_diagram(spec, res, args.output, data=args.data, units=args.units)
    for w in written:
        print(f"wrote {w}")
    print(CAUTION)
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def cmd_report(args) -> int:
    from .reports.review import write_report

    spec, res = _solve(args.file)
    fmt = args.format or ("md" if args.output.endswith(".md") else "html")
    path = write_report(spec, res, args.output, fmt=fmt)
    print(f"wrote {path}")
    print(CAUTION)
    return EXIT_OK if res.feasible else EXIT_INFEASIBLE


def cmd_envelope(args) -> int:
    from .charts.envelope_plot import check_output

    check_output(args.output)
    spec, res = _solve(args.file)
    if not res.feasible:
        from .reports.summary import summary

        print(summary(res, args.file))
        return EXIT_INFEASIBLE
    from .charts.envelope import compute_envelope, status_text
    from .charts.envelope_plot import write_envelope

    env = compute_envelope(spec, res, args.weight_fraction)
    print(env.table_text() + "\n\nRequirements at their own conditions")
    print("\n".join(f"  {p.id:<18} {status_text(p):<16} {p.detail}   [{p.conditions}]" for p in env.points) + "\n")
    print("\n".join(f"wrote {w}" for w in write_envelope(env, args.output, args.data)) + "\n" + CAUTION)
    return EXIT_OK


def cmd_study(args) -> int:
    from .studies.plots import summary, write_outputs
    from .studies.runner import run_study

    result = run_study(args.file, workers=args.workers, dask=args.dask, limit=args.limit)
    written = write_outputs(result, args.output)
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
            "explore": cmd_explore}


def main(argv=None) -> int:
    args = _parser().parse_args(argv)
    debug = getattr(args, "debug", False)
    from .common.errors import InputError, SizingError

    try:
        return COMMANDS[args.command](args)
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
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return EXIT_ERROR
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
