"""The element models a design file can name: ``[element] model = "..."``.

Each entry of :data:`ELEMENT_MODELS` holds the model's class, the keys its ``[element]``
table may have (besides ``model``) and the function building it from that table. The
design-file reader (:mod:`steradian.io.design`) only looks models up here.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Protocol

from ..errors import shown
from ..schema import Section
from ._base import Element
from ._patch import Patch
from ._simple import MAX_DIPOLE_WL, CosinePower, Dipole, Isotropic, ShortDipole
from ._table import TabulatedElement

__all__ = ["ElementModel", "ELEMENT_MODELS", "DesignContext"]


class DesignContext(Protocol):
    """What a builder may use besides its table: the design frequency (Hz), the wave speed
    (m/s), the wavelength (m), the folder relative file names resolve against, and the
    element-table reader (files are read by :mod:`steradian.io`)."""

    frequency: float
    speed: float
    wavelength: float
    base_dir: Path
    read_element_table: Callable[[Path], Element]


@dataclass(frozen=True)
class ElementModel:
    """One model of :data:`ELEMENT_MODELS`: its class, design-file keys and builder."""

    cls: type
    keys: tuple[str, ...]
    build: Callable[[Section, DesignContext], Element]


def _axis(t: Section):
    v = t.data.get("axis", "z")
    if isinstance(v, str):
        return t.string("axis", "z", choices=("x", "y", "z"))
    return t.vector3("axis")


def _cosine_power(t: Section, ctx: DesignContext) -> Element:
    return CosinePower(t.number("q", minimum=0),
                       t.string("exponent_on", "power", choices=("power", "field")))


def _dipole(t: Section, ctx: DesignContext) -> Element:
    has = [k for k in ("length_m", "length_wl") if k in t]
    if len(has) != 1:
        raise t.error("length_m", "give exactly one of element.length_m (metres) or "
                      "element.length_wl (wavelengths)")
    length = t.number(has[0], above=0)
    if has[0] == "length_wl":
        if length > MAX_DIPOLE_WL:
            raise t.error("length_wl", f"must be at most {MAX_DIPOLE_WL:g} wavelengths, got "
                          f"{shown(length)}")
        length *= ctx.wavelength
    return Dipole(length, _axis(t), ctx.frequency, ctx.speed)


def _patch(t: Section, ctx: DesignContext) -> Element:
    eps_r = t.number("eps_r", minimum=1)
    h = t.number("height_m", above=0)
    w = t.number("width_m", None, above=0)
    length = t.number("length_m", None, above=0)
    if length is None:
        return Patch.resonant(ctx.frequency, eps_r, h, width_m=w)
    if w is None:
        raise t.error("width_m", "required when element.length_m is given")
    return Patch(ctx.frequency, w, length, eps_r, h, speed=ctx.speed)


ELEMENT_MODELS: dict[str, ElementModel] = {
    "isotropic": ElementModel(Isotropic, (), lambda t, ctx: Isotropic()),
    "cosine_power": ElementModel(CosinePower, ("q", "exponent_on"), _cosine_power),
    "dipole": ElementModel(Dipole, ("length_m", "length_wl", "axis"), _dipole),
    "short_dipole": ElementModel(ShortDipole, ("axis",), lambda t, ctx: Dipole(None, _axis(t))),
    "patch": ElementModel(Patch, ("eps_r", "height_m", "width_m", "length_m"), _patch),
    "table": ElementModel(TabulatedElement, ("file",), lambda t, ctx: ctx.read_element_table(
        t.path("file", ctx.base_dir))),
}
"""Design-file element models by name. To add one: a builder ``f(section, ctx)`` and a line
here (plus the README's model table)."""
