"""The ``avalanche sweep`` subcommand (registered into :mod:`avalanche.cli.main` on import)."""

from __future__ import annotations

import argparse
import sys

from .registry import command

SWEEP_HELP = "compute a run file's grid of points into a resumable HDF5 results file"
EXIT_FAILED_POINTS = 3
"""Exit status of a sweep that finished but with failed points (they are retried by --resume)."""
EXIT_NOT_CONVERGED = 4
"""Exit status of a sweep whose points all finished but some are marked not converged (stored with the reason)."""


def configure(parser: argparse.ArgumentParser) -> None:
    """Add the arguments of ``avalanche sweep`` to ``parser``."""
    parser.add_argument("runfile", metavar="RUNFILE", help="the run file (.toml), e.g. runs/quick.toml")
    where = parser.add_mutually_exclusive_group()
    where.add_argument("--workers", type=int, metavar="N",
                       help="local worker processes (default: one per core)")
    where.add_argument("--scheduler", metavar="ADDRESS",
                       help="run the points on a Dask cluster: scheduler address (tcp://host:8786) or scheduler "
                            "file")
    where.add_argument("--cluster", action="store_true",
                       help="start the dask-jobqueue (Slurm/PBS) cluster of the run file's [cluster] table")
    parser.add_argument("--out", metavar="PATH", help="results file (default: the run file's [sweep] output)")
    parser.add_argument("--resume", action="store_true",
                        help="continue an existing results file, computing only the points not finished yet")
    parser.add_argument("--quiet", action="store_true", help="no progress bar or summary (failures still shown)")
    parser.add_argument("--job-directive", action="append", default=[], metavar="LINE",
                        help="with --cluster: a batch-system directive line for the job script (repeatable); run "
                             "files cannot add job-script lines")
    parser.add_argument("--job-prologue", action="append", default=[], metavar="LINE",
                        help="with --cluster: a shell line run in the job before the worker starts (repeatable)")
    parser.add_argument("--threads-per-worker", type=int, default=1, metavar="T",
                        help="numba threads per point (default 1; results do not depend on it)")


@command("sweep", SWEEP_HELP, configure=configure)
def run(args) -> int:
    """Run ``avalanche sweep``; exit status 0 when every point finished and converged, 3 when some failed, 4 when
    some are marked not converged."""
    from ..sweep.execution import run_sweep

    try:
        report = run_sweep(args.runfile, workers=args.workers, scheduler=args.scheduler, cluster=args.cluster,
                           out=args.out, resume=args.resume, quiet=args.quiet,
                           threads_per_worker=args.threads_per_worker, job_directives=tuple(args.job_directive),
                           job_prologue=tuple(args.job_prologue))
    except KeyboardInterrupt:
        print("avalanche sweep: interrupted; the finished points are saved, continue with --resume",
              file=sys.stderr)
        return 130
    if not args.quiet:
        print(f"avalanche sweep: {report.summary()}", file=sys.stderr)
    if report.failed:
        print(f"avalanche sweep: {len(report.failed)} point(s) failed (see {report.path.with_suffix('.failures.log')});"
              " run again with --resume to retry them", file=sys.stderr)
        return EXIT_FAILED_POINTS
    if report.not_converged:
        print(f"avalanche sweep: {len(report.not_converged)} point(s) not converged (points "
              f"{[p['index'] for p in report.not_converged]}; reasons in the results file): raise max_events or "
              "check the field range", file=sys.stderr)
        return EXIT_NOT_CONVERGED
    return 0


def register(subparsers) -> argparse.ArgumentParser:
    """Add the ``sweep`` subcommand to an ``argparse`` subparsers object (for embedding in another parser).

    ``avalanche.cli.main`` does not need this: importing this module registers the command through
    :func:`avalanche.cli.main.command`.
    """
    parser = subparsers.add_parser("sweep", help=SWEEP_HELP, description=SWEEP_HELP)
    configure(parser)
    parser.set_defaults(_run=run)
    return parser
