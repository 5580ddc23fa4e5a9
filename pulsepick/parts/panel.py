"""Small solar panels: the single-diode model built from a panel's rated Voc and Isc.

The panel is ``cells`` identical cells in series, modelled as one equivalent diode:

    I = IL - I0·(exp((V + I·Rs)/a) - 1) - (V + I·Rs)/Rsh,   a = cells·n·k·T/q

(single-diode model, ref:solar-cell-voc-exercise; the series and shunt resistances are the usual full form).
The photocurrent IL is proportional to irradiance (ref:solar-cell-voc-exercise); the saturation current I0 and
the resistances do not depend on light, so the open-circuit voltage rises by
``n·k·T/q·ln(10)`` per decade of irradiance per cell (ref:solar-cell-voc-exercise).

IL and I0 are fixed by two points of the rated curve at 1000 W/m²: I = Isc at V = 0 and I = 0 at
V = Voc. The current at a voltage is solved exactly with the Lambert W function (the explicit
solution of the implicit equation above); the open-circuit voltage with a safeguarded Newton
iteration on the concave junction equation.

Daylight is often given in lux. For sunlight about 120 lx correspond to 1 W/m² (common
practice, from memory; the ratio changes with the sky's spectrum, so levels in lux are
estimates).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cache

import numpy as np

from pulsepick.errors import PartError
from pulsepick.parts.junction import lambert_w_of_exp
from pulsepick.physconst import K_OVER_Q_V_PER_K
from pulsepick.tables import load_table

# Rated conditions of a panel: 1000 W/m², cell temperature 25 °C (common practice).
RATED_IRRADIANCE_W_M2 = 1000.0
RATED_TEMPERATURE_K = 298.15

# Daylight: about 120 lx per W/m² (common practice, from memory; an estimate for any one sky).
LUX_PER_W_M2 = 120.0

# Defaults for a panel given only by its ratings, in proportion to voc/isc like the shipped
# panels (estimate; see data/parts/panels.csv).
DEFAULT_IDEALITY = 1.5
DEFAULT_R_S_FRACTION = 0.05
DEFAULT_R_SH_FACTOR = 5000.0
# A rough open-circuit voltage per small crystalline cell at full sun, used only to guess the
# number of cells when it is not given (estimate).
TYPICAL_CELL_VOC_V = 0.6


def thermal_voltage(temperature_k: float) -> float:
    """k·T/q in volts (exact SI constants, equal to scipy.constants)."""
    return K_OVER_Q_V_PER_K * temperature_k


def irradiance_from_lux(lux):
    """Daylight illuminance (lx) to irradiance (W/m²), at ~120 lx per W/m² (from memory)."""
    return lux / LUX_PER_W_M2


def lux_from_irradiance(irradiance_w_m2):
    """Irradiance (W/m²) to daylight illuminance (lx), at ~120 lx per W/m² (from memory)."""
    return irradiance_w_m2 * LUX_PER_W_M2


def open_circuit_voltage(photocurrent_a, saturation_current_a: float, diode_voltage_v: float,
                         r_sh_ohm: float = math.inf):
    """Voc of a single-diode device: the root of IL - I0·(exp(V/a) - 1) - V/Rsh = 0.

    Parameters
    ----------
    photocurrent_a : float or array
        IL (A), zero or positive.
    saturation_current_a : float
        I0 (A), positive.
    diode_voltage_v : float
        a = cells·n·k·T/q (V).
    r_sh_ohm : float
        Shunt resistance (Ω); ``inf`` for none. The series resistance carries no current at
        open circuit, so it does not enter.

    Returns
    -------
    float or array
        Voc (V). Without a shunt it is a·ln(1 + IL/I0) (ref:solar-cell-voc-exercise).

    Notes
    -----
    The left side is concave and falling in V, so Newton's method started at the shunt-free
    value (which is at or above the root) converges from above without overshooting.
    """
    il = np.asarray(photocurrent_a, dtype=float)
    i0 = float(saturation_current_a)
    a = float(diode_voltage_v)
    v = a * np.log1p(il / i0)
    if math.isfinite(r_sh_ohm):
        g_sh = 1.0 / r_sh_ohm
        for _ in range(60):
            e = np.exp(v / a)
            f = il - i0 * (e - 1.0) - v * g_sh
            step = f / (i0 * e / a + g_sh)
            v = v + step
            if np.all(np.abs(step) <= 1e-13 + 1e-12 * np.abs(v)):
                break
    return float(v) if v.ndim == 0 else v


@dataclass(frozen=True)
class PanelModel:
    """A small solar panel, rated at 1000 W/m² and 25 °C, as a single-diode model.

    Build with :func:`get_panel` or :func:`custom_panel`.
    """

    key: str  # short name
    name: str  # description
    voc_v: float  # open-circuit voltage at 1000 W/m² (V)
    isc_a: float  # short-circuit current at 1000 W/m² (A)
    cells: int  # cells in series (1)
    n: float  # diode ideality factor per cell (1)
    r_s_ohm: float  # series resistance of the whole panel (Ω)
    r_sh_ohm: float  # shunt resistance of the whole panel (Ω), inf for none
    source_notes: str  # where the numbers come from
    temperature_k: float = RATED_TEMPERATURE_K  # cell temperature (K)
    _il_ref: float = field(init=False, repr=False, compare=False)  # IL at 1000 W/m² (A)
    _i0: float = field(init=False, repr=False, compare=False)  # saturation current I0 (A)

    def __post_init__(self) -> None:
        problems = []
        if not (math.isfinite(self.voc_v) and self.voc_v > 0):
            problems.append(f"voc {self.voc_v} V must be a positive voltage")
        if not (math.isfinite(self.isc_a) and self.isc_a > 0):
            problems.append(f"isc {self.isc_a} A must be a positive current")
        if int(self.cells) != self.cells or self.cells < 1:
            problems.append(f"cells {self.cells} must be a whole number of 1 or more")
        if not (0.5 <= self.n <= 5.0):
            problems.append(f"ideality factor {self.n} must lie between 0.5 and 5")
        if not (math.isfinite(self.r_s_ohm) and self.r_s_ohm >= 0):
            problems.append(f"series resistance {self.r_s_ohm} ohm must be zero or positive")
        if not (self.r_sh_ohm > 0):
            problems.append(f"shunt resistance {self.r_sh_ohm} ohm must be positive (inf for none)")
        if not (150.0 <= self.temperature_k <= 400.0):
            problems.append(f"temperature {self.temperature_k} K must lie between 150 and 400 K")
        if problems:
            raise PartError(f"panel {self.key!r}: " + "; ".join(problems))
        object.__setattr__(self, "cells", int(self.cells))
        a = self.diode_voltage_v
        g_sh = 0.0 if math.isinf(self.r_sh_ohm) else 1.0 / self.r_sh_ohm
        # Two rated points: (0, Isc) and (Voc, 0). Eliminating IL gives I0 in closed form.
        num = self.isc_a * (1.0 + self.r_s_ohm * g_sh) - self.voc_v * g_sh
        den = math.exp(self.voc_v / a) - math.exp(self.isc_a * self.r_s_ohm / a)
        if num <= 0 or den <= 0 or not math.isfinite(den):
            raise PartError(
                f"panel {self.key!r}: voc {self.voc_v} V, isc {self.isc_a} A, "
                f"r_s {self.r_s_ohm} ohm and r_sh {self.r_sh_ohm} ohm do not make a working cell; "
                "accepted: r_sh well above voc/isc, isc·r_s well below voc, "
                f"and voc below about {700 * a:.3g} V for {self.cells} cell(s)"
            )
        i0 = num / den
        il = (self.isc_a * (1.0 + self.r_s_ohm * g_sh)
              + i0 * math.expm1(self.isc_a * self.r_s_ohm / a))
        object.__setattr__(self, "_i0", i0)
        object.__setattr__(self, "_il_ref", il)

    # -- parameters ---------------------------------------------------------------------
    @property
    def diode_voltage_v(self) -> float:
        """a = cells·n·k·T/q (V), the modified ideality voltage of the whole panel."""
        return self.cells * self.n * thermal_voltage(self.temperature_k)

    @property
    def saturation_current_a(self) -> float:
        """I0 (A), fixed by the rated Voc and Isc."""
        return self._i0

    def photocurrent(self, irradiance_w_m2):
        """IL (A) at an irradiance (W/m²): proportional to irradiance (ref:solar-cell-voc-exercise)."""
        g = np.asarray(irradiance_w_m2, dtype=float)
        il = self._il_ref * np.maximum(g, 0.0) / RATED_IRRADIANCE_W_M2
        return float(il) if il.ndim == 0 else il

    # -- the I-V curve ------------------------------------------------------------------
    def current(self, v, irradiance_w_m2):
        """Terminal current (A) at terminal voltage ``v`` (V) and irradiance (W/m²).

        Exact explicit solution with the Lambert W function; broadcasts over arrays. Positive
        current flows out of the panel's + terminal.
        """
        v_arr = np.asarray(v, dtype=float)
        il = np.asarray(self.photocurrent(irradiance_w_m2), dtype=float)
        v_b, il_b = np.broadcast_arrays(v_arr, il)
        a = self.diode_voltage_v
        i0 = self._i0
        g_sh = 0.0 if math.isinf(self.r_sh_ohm) else 1.0 / self.r_sh_ohm
        rs = self.r_s_ohm
        if rs == 0.0:
            arg = np.minimum(v_b / a, 700.0)
            out = il_b - i0 * np.expm1(arg) - v_b * g_sh
        else:
            k = 1.0 + rs * g_sh
            log_theta = math.log(rs * i0 / (a * k)) + (rs * (il_b + i0) + v_b) / (a * k)
            out = (il_b + i0 - v_b * g_sh) / k - (a / rs) * lambert_w_of_exp(log_theta)
        return float(out) if out.ndim == 0 else out

    def voc(self, irradiance_w_m2=RATED_IRRADIANCE_W_M2):
        """Open-circuit voltage (V) at an irradiance (W/m²); zero in the dark."""
        return open_circuit_voltage(self.photocurrent(irradiance_w_m2), self._i0,
                                    self.diode_voltage_v, self.r_sh_ohm)

    def isc(self, irradiance_w_m2=RATED_IRRADIANCE_W_M2):
        """Short-circuit current (A) at an irradiance (W/m²)."""
        return self.current(0.0 if np.ndim(irradiance_w_m2) == 0 else
                            np.zeros(np.shape(irradiance_w_m2)), irradiance_w_m2)

    def voltage_into_resistor(self, r_ohm, irradiance_w_m2, *, extra_current_a=0.0):
        """Terminal voltage (V) with a resistor ``r_ohm`` (Ω) across the panel.

        ``extra_current_a`` (A) is a current pushed *into* the + terminal from outside (for
        example a blocking diode's reverse leakage at night); it can lift the voltage in the
        dark. Solved on the junction voltage, where every term is explicit and the residual
        falls monotonically; safeguarded Newton steps inside a bracket. Broadcasts.
        """
        r = np.asarray(r_ohm, dtype=float)
        il = np.asarray(self.photocurrent(irradiance_w_m2), dtype=float)
        extra = np.asarray(extra_current_a, dtype=float)
        r, il, extra = np.broadcast_arrays(r, il, extra)
        a = self.diode_voltage_v
        i0 = self._i0
        g_sh = 0.0 if math.isinf(self.r_sh_ohm) else 1.0 / self.r_sh_ohm
        rs = self.r_s_ohm
        g = np.where(np.isinf(r), 0.0, 1.0 / r)

        def residual(vj):
            e = np.exp(np.minimum(vj / a, 700.0))
            ip = il - i0 * (e - 1.0) - vj * g_sh  # panel current out of the + terminal
            vt = vj - rs * ip
            f = ip + extra - vt * g
            dip = -i0 * e / a - g_sh
            df = dip - (1.0 - rs * dip) * g
            return f, df, vt

        # Bracket: f(0) >= 0; f is negative once the junction passes the open-circuit voltage
        # of the photocurrent plus the pushed-in current.
        lo = np.zeros_like(il)
        hi = a * np.log1p((il + np.maximum(extra, 0.0)) / i0) + 1e-12
        vj = 0.5 * (lo + hi)
        for _ in range(100):
            f, df, vt = residual(vj)
            pos = f > 0
            lo = np.where(pos, vj, lo)
            hi = np.where(pos, hi, vj)
            with np.errstate(divide="ignore", invalid="ignore"):
                newton = vj - f / df
            ok = np.isfinite(newton) & (newton > lo) & (newton < hi)
            nxt = np.where(ok, newton, 0.5 * (lo + hi))
            if np.all(np.abs(nxt - vj) <= 1e-14 + 1e-12 * np.abs(vj)):
                vj = nxt
                break
            vj = nxt
        _, _, vt = residual(vj)
        return float(vt) if vt.ndim == 0 else vt


def _row_to_panel(row: dict[str, object]) -> PanelModel:
    return PanelModel(
        key=str(row["key"]),
        name=str(row["name"]),
        voc_v=float(row["voc_v"]),  # type: ignore[arg-type]
        isc_a=float(row["isc_a"]),  # type: ignore[arg-type]
        cells=int(float(row["cells"])),  # type: ignore[arg-type]
        n=float(row["n"]),  # type: ignore[arg-type]
        r_s_ohm=float(row["r_s_ohm"]),  # type: ignore[arg-type]
        r_sh_ohm=float(row["r_sh_ohm"]),  # type: ignore[arg-type]
        source_notes=str(row["source"]),
    )


@cache
def _panels() -> dict[str, PanelModel]:
    table = load_table("parts/panels.csv")
    return {str(row["key"]): _row_to_panel(row) for row in table.rows}


def panel_keys() -> tuple[str, ...]:
    """Keys of the shipped panels, in table order."""
    return tuple(_panels())


def get_panel(key: str) -> PanelModel:
    """A shipped panel by key (see data/parts/panels.csv)."""
    panels = _panels()
    k = key.strip().lower()
    if k not in panels:
        raise PartError(f"unknown panel {key!r}; known panels: {', '.join(panels)}")
    return panels[k]


def custom_panel(voc_v: float, isc_a: float, cells: int | None = None, *,
                 n: float = DEFAULT_IDEALITY,
                 r_s_ohm: float | None = None, r_sh_ohm: float | None = None,
                 temperature_k: float = RATED_TEMPERATURE_K, key: str = "custom",
                 name: str | None = None) -> PanelModel:
    """A panel from its rated Voc (V) and Isc (A) at 1000 W/m².

    Unknown values are estimated: ``cells`` from about 0.6 V per cell, ``r_s_ohm`` as 5 % and
    ``r_sh_ohm`` as 5000 times voc/isc (estimates in proportion to the shipped panels).
    """
    problems = []
    if not (isinstance(voc_v, (int, float)) and math.isfinite(voc_v) and voc_v > 0):
        problems.append(f"panel voc {voc_v} must be a positive voltage, e.g. 5V")
    if not (isinstance(isc_a, (int, float)) and math.isfinite(isc_a) and isc_a > 0):
        problems.append(f"panel isc {isc_a} must be a positive current, e.g. 60mA")
    if problems:
        raise PartError("; ".join(problems))
    notes = []
    if cells is None:
        cells = max(1, round(voc_v / TYPICAL_CELL_VOC_V))
        notes.append(f"cells {cells} guessed from ~{TYPICAL_CELL_VOC_V} V per cell (estimate)")
    if r_s_ohm is None:
        r_s_ohm = DEFAULT_R_S_FRACTION * voc_v / isc_a
        notes.append("r_s 5 % of voc/isc (estimate)")
    if r_sh_ohm is None:
        r_sh_ohm = DEFAULT_R_SH_FACTOR * voc_v / isc_a
        notes.append("r_sh 5000x voc/isc (estimate)")
    return PanelModel(
        key=key,
        name=name or f"{voc_v:g} V {isc_a * 1e3:g} mA panel ({cells} cells)",
        voc_v=float(voc_v),
        isc_a=float(isc_a),
        cells=cells,
        n=float(n),
        r_s_ohm=float(r_s_ohm),
        r_sh_ohm=float(r_sh_ohm),
        source_notes="user ratings; " + ("; ".join(notes) if notes else "all values given"),
        temperature_k=float(temperature_k),
    )
