"""Command-line interface: thin wrappers over :mod:`steradian.workflows`.

Commands are registered by name in :data:`COMMANDS` and imported only when invoked, so
``steradian --help`` never waits on numba or matplotlib. Each command parses its options,
calls one recipe and shows the result through :mod:`steradian.cli._render` (tables, JSON);
commands never import each other. Library warnings (``UserWarning``: legal but doubtful input)
are shown as one ``steradian: warning: ...`` line on stderr each.

Exit codes (kept by :meth:`_LazyGroup.invoke`; README "Exit codes"):

- 0: success;
- 1: a verification or requirement failed (the command says which) -- never a crash;
- 2: bad input or environment: a :class:`~steradian.errors.SteradianError` (design, file,
  option), any ``OSError`` (missing or unreadable file, disk full, read-only file system,
  permission, file-size limit), ``MemoryError`` or numpy's refusal of an array larger than
  the address space; one ``steradian: error: ...`` line;
  click's own usage errors also exit 2;
- 3: an internal error (any other exception, a bug): one ``steradian: internal error: ...``
  line with the exception type and message and a request to report it; the traceback only
  with ``-v`` or the environment variable ``STERADIAN_TRACEBACK=1``;
- 130: interrupted (Ctrl-C), as shells report SIGINT.
"""

from __future__ import annotations

import importlib
import logging
import os
import traceback
import warnings

import click

from ..errors import SteradianError
from ..version import VERSION as __version__

# name -> (module, function). Add one line per command; the module holds a click.Command.
COMMANDS: dict[str, tuple[str, str]] = {
    "demo": ("steradian.cli.demo", "demo"),
    "analyze": ("steradian.cli.analyze", "analyze"),
    "pattern": ("steradian.cli.pattern", "pattern"),
    "beams": ("steradian.cli.beams", "beams"),
    "verify": ("steradian.cli.verify", "verify"),
    "synth": ("steradian.cli.synth", "synth"),
    "tradeoff": ("steradian.cli.tradeoff", "tradeoff"),
    "figure": ("steradian.cli.figure", "figure"),
    "report": ("steradian.cli.report", "report"),
    "sweep": ("steradian.cli.sweep", "sweep"),
    "tolerance": ("steradian.cli.tolerance", "tolerance"),
}

# One-line help shown by ``steradian --help`` without importing the command modules.
SHORT_HELP: dict[str, str] = {
    "demo": "Analyse the bundled demo design and write a pattern-cut PNG.",
    "analyze": "Analyse a TOML design: directivity, gain, beamwidths, sidelobes.",
    "pattern": "Export pattern cuts and u-v grids of a design to CSV.",
    "beams": "Quantize a design's beam table and write firmware weight files.",
    "verify": "Compare a weight file with its design's table; re-evaluate its beams.",
    "synth": "Synthesise optimal weights for a design and write a weights CSV.",
    "tradeoff": "Trade curve: maximum directivity against peak sidelobe level.",
    "figure": "Draw one figure of a design (cuts, u-v, maps, layout ...) as PNG/SVG/PDF.",
    "report": "Write a self-contained HTML design report with requirement verdicts.",
    "sweep": "Sweep a design over one or two parameters and tabulate its metrics.",
    "tolerance": "Monte Carlo tolerance run: random errors, failures, quantization.",
}


EXIT_OK, EXIT_FAILED, EXIT_INPUT, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130
"""The exit codes of every command (see the module docstring)."""

REPORT_URL = "the steradian issue tracker"
TRACEBACK_ENV = "STERADIAN_TRACEBACK"


def _one_line(text, limit: int = 2000) -> str:
    """``text`` on one line, at most ``limit`` characters (messages may quote input)."""
    flat = " ".join(str(text).split())
    return flat if len(flat) <= limit else flat[: limit - 3] + "..."


def _error(message) -> None:
    click.echo(f"steradian: error: {_one_line(message)}", err=True)


def _os_error_message(exc: OSError) -> str:
    reason = exc.strerror or str(exc) or type(exc).__name__
    return f"{exc.filename}: {reason}" if exc.filename is not None else reason


# numpy's refusals of an array larger than the address space (numpy/core/src/multiarray:
# "array is too big", arange's "Maximum allowed size exceeded"): the problem is too large,
# an environment limit (exit 2), not a bug. The resource guard should refuse such sizes first.
_TOO_BIG = ("array is too big", "Maximum allowed size exceeded")


def _too_big(exc: BaseException) -> bool:
    return type(exc) is ValueError and str(exc).startswith(_TOO_BIG)


def _internal_error(ctx, exc: BaseException) -> None:
    verbose = (ctx.params.get("verbose") or 0) > 0 or os.environ.get(TRACEBACK_ENV, "") not in (
        "", "0")
    if verbose:
        click.echo("".join(traceback.format_exception(exc)).rstrip(), err=True)
    click.echo(f"steradian: internal error: {type(exc).__name__}: {_one_line(exc, 300)} "
               f"(a bug: please report it to {REPORT_URL} with the command and input; "
               f"-v or {TRACEBACK_ENV}=1 shows the traceback)", err=True)


def _show_warning(message, category, filename, lineno, file=None, line=None):
    click.echo(f"steradian: warning: {message}", err=True)


class _LazyGroup(click.Group):
    def list_commands(self, ctx):
        return sorted(COMMANDS)

    def get_command(self, ctx, name):
        if name not in COMMANDS:
            return None
        mod, attr = COMMANDS[name]
        return getattr(importlib.import_module(mod), attr)

    def format_commands(self, ctx, formatter):
        rows = [(n, SHORT_HELP.get(n, "")) for n in self.list_commands(ctx)]
        if rows:
            with formatter.section("Commands"):
                formatter.write_dl(rows)

    def invoke(self, ctx):
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("always", UserWarning)
                warnings.showwarning = _show_warning
                return super().invoke(ctx)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except SteradianError as exc:
            _error(exc)
        except ValueError as exc:
            if not _too_big(exc):
                _internal_error(ctx, exc)
                ctx.exit(EXIT_INTERNAL)
            _error(f"the problem is too large for this machine (numpy: {exc})")
        except OSError as exc:
            _error(_os_error_message(exc))
        except MemoryError as exc:
            _error(f"out of memory{': ' + str(exc) if str(exc) else ''} (the problem is too "
                   "large for this machine; reduce it)")
        except KeyboardInterrupt:
            click.echo("steradian: interrupted", err=True)
            ctx.exit(EXIT_INTERRUPTED)
        except Exception as exc:
            _internal_error(ctx, exc)
            ctx.exit(EXIT_INTERNAL)
        ctx.exit(EXIT_INPUT)


@click.group(cls=_LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="steradian")
@click.option("-v", "--verbose", count=True, help="More log output (repeatable).")
@click.option("-q", "--quiet", is_flag=True, help="Only errors.")
@click.option("--memory-budget", metavar="SIZE",
              help="Largest memory one step may use, e.g. 2GiB or 500MB (default: the "
                   "STERADIAN_MEMORY_BUDGET environment variable, else a quarter of the "
                   "machine's memory); larger work is refused in one line.")
@click.pass_context
def main(ctx, verbose, quiet, memory_budget):
    """steradian: phased-array analysis and design.

    Element pattern x array factor, directivity and gain by spherical integration, pattern
    metrics, tapers and synthesis, quantized beam tables for firmware.
    """
    level = logging.ERROR if quiet else (logging.WARNING, logging.INFO, logging.DEBUG)[
        min(verbose, 2)]
    logging.basicConfig(level=level, format="%(levelname)s: %(message)s")
    if memory_budget is not None:
        from ..budget import set_budget  # light: no numpy import

        old = set_budget(memory_budget)
        ctx.call_on_close(lambda: set_budget(old))  # in-process callers keep their budget
    ctx.ensure_object(dict)
