"""Command-line interface: thin wrappers over :mod:`steradian.workflows`.

Commands are registered by name in :data:`COMMANDS` and imported only when invoked, so
``steradian --help`` never waits on numba or matplotlib. Each command parses its options,
calls one recipe and shows the result through :mod:`steradian.cli._render` (tables, JSON);
commands never import each other. Library warnings (``UserWarning``: legal but doubtful input)
are shown as one ``steradian: warning: ...`` line on stderr; errors as one
``steradian: error: ...`` line with exit code 2.
"""

from __future__ import annotations

import importlib
import logging
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
}


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
        except SteradianError as exc:
            click.echo(f"steradian: error: {exc}", err=True)
            ctx.exit(2)
        except (FileNotFoundError, IsADirectoryError, PermissionError) as exc:
            click.echo(f"steradian: error: {exc.filename}: {exc.strerror}", err=True)
            ctx.exit(2)


@click.group(cls=_LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="steradian")
@click.option("-v", "--verbose", count=True, help="More log output (repeatable).")
@click.option("-q", "--quiet", is_flag=True, help="Only errors.")
@click.pass_context
def main(ctx, verbose, quiet):
    """steradian: phased-array analysis and design.

    Element pattern x array factor, directivity and gain by spherical integration, pattern
    metrics, tapers and synthesis, quantized beam tables for firmware.
    """
    level = logging.ERROR if quiet else (logging.WARNING, logging.INFO, logging.DEBUG)[
        min(verbose, 2)]
    logging.basicConfig(level=level, format="%(levelname)s: %(message)s")
    ctx.ensure_object(dict)
