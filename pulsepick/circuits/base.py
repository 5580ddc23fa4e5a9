"""Shared types of the circuit modules: parameters, the electrical environment,
the loads a stage puts on its driver, and the registry. What the engines return
(status codes, ``Figures``, effective current) lives in :mod:`pulsepick.circuits.figures`
and is re-exported here.

Everything is vectorised: a value or environment field may be a float or a numpy
array, and all of them broadcast together (one element per candidate circuit).
SI units throughout.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, ClassVar, Literal, Protocol

import numpy as np

from pulsepick.circuits.figures import (  # noqa: F401  (re-exported)
    DARK,
    EFFECTIVE_A_S,
    RUNS,
    STALLS,
    STATUS_WORDS,
    UNPOWERED,
    Figures,
    effective_current,
)
from pulsepick.errors import CircuitError
from pulsepick.hints import hint

Array = np.ndarray
ChipKind = Literal["schmitt", "timer"]
PartKind = Literal["diode", "transistor"]  # parts a circuit adds beyond its R and C values
Level = Literal["high", "low"]


@dataclass(frozen=True)
class Param:
    """One component value a circuit needs."""

    name: str  # key in the values mapping, e.g. "r1"
    kind: Literal["R", "C"]  # resistor or capacitor
    role: str  # what it does, for parts lists ("timing resistor")
    optional: bool = False  # may be absent (then ``default`` is used)
    default: float = 0.0  # ohm or farad when optional and absent
    option: str = ""  # command-line option that sets it ("--rs"); "--" + name when empty
    help: str = ""  # command-line help, e.g. "LED series resistor RS"
    example: str = ""  # an example value in RKM or engineering notation, e.g. "470R"

    @property
    def flag(self) -> str:
        return self.option or f"--{self.name}"


@dataclass(frozen=True)
class ExtraPart:
    """A part other than the resistors and capacitors a circuit's params give."""

    kind: PartKind
    role: str  # what it does, for parts lists
    note: str  # how it goes in (polarity, pins)
    choice: str = ""  # the PartChoice field that names the part (the user picks it) ...
    key: str = ""  # ... or the part table key when the circuit fixes it

    def part_key(self, parts: Any) -> str:
        """The part table key, given the build's ``PartChoice``."""
        return getattr(parts, self.choice) if self.choice else self.key


@dataclass(frozen=True)
class Env:
    """The electrical surroundings of a batch of circuits at one operating point.

    All numeric fields broadcast with the circuit values.
    """

    chip_kind: ChipKind
    vdd: Any  # V, supply
    vt_plus: Any  # V, upper switching level (Schmitt VT+, or the 555 threshold)
    vt_minus: Any  # V, lower switching level (Schmitt VT-, or the 555 trigger)
    rout_high: Any  # ohm, output resistance of a gate driving high
    rout_low: Any  # ohm, output resistance of a gate driving low
    pin_leak_a: Any  # A, input-pin leakage drawn out of the timing node (sign: discharges it)
    iq_a: Any  # A, quiescent supply current of the chip (whole package)
    cap_leak_g: Any  # S, leakage conductance of the timing capacitor
    led: Any  # LedModel (pulsepick.parts.led)
    steer_diode: Any = None  # DiodeModel for the steering diode
    reset_diode: Any = None  # DiodeModel for the pulse-stage reset diode
    fade_diode: Any = None  # DiodeModel for the fade-stage charge diode
    cross_current: Callable[[Any, Any], Any] | None = None  # A = f(v_in, vdd), estimate
    cross_override_a: Any = None  # A, measured average crossing current (replaces the model)
    r_discharge: Any = 0.0  # ohm, 555 discharge switch
    stage_cap_leak_g: Any = 0.0  # S, leakage conductance of the stage capacitor
    effective_a_s: float = EFFECTIVE_A_S  # s, effective-intensity constant


@dataclass(frozen=True)
class Topology:
    """Which core and stage, and how the stage is driven."""

    core: str  # registered core name
    stage: str  # registered stage name
    buffered: bool = False  # stage driven by a spare gate (inverting) instead of the timing gate
    lit: Level = "high"  # direct stage: lit while its driver is high (LED to ground) or low
    steer: Level = "high"  # schmitt-steered: the phase the diode branch speeds up

    def label(self) -> str:
        parts = [get_core(self.core).label(self), get_stage(self.stage).label(self)]
        if self.buffered:
            parts.append("buffered")
        return " + ".join(parts)


@dataclass(frozen=True)
class Load:
    """What a stage draws from its driver during one driver phase.

    The driver is seen by the timing network as a Thevenin source; a stage shifts
    it by a steady current and an impulse of charge at the start of the phase.
    """

    i_ss: Any = 0.0  # A, steady current drawn out of the driver node (negative: pushed in)
    r_dyn: Any = np.inf  # ohm, incremental resistance of the stage at that current
    q_imp: Any = 0.0  # C, extra charge drawn out at the start of the phase
    s_imp: Any = 0.0  # s, decay time constant of that impulse current
    t_imp: Any = np.inf  # s, length of the phase that truncates the impulse


@dataclass(frozen=True)
class Drive:
    """Thevenin view of the timing node's source during one timing phase."""

    v_th: Any  # V, open-circuit level
    r_th: Any  # ohm, source resistance
    r_out: Any  # ohm, gate output resistance carrying the impulse
    q_imp: Any = 0.0  # C, impulse charge drawn from the node at the phase start
    s_imp: Any = 0.0  # s, decay time constant of the impulse current
    t_imp: Any = np.inf  # s, length of the phase that truncates it


@dataclass(frozen=True)
class PhaseTimes:
    """Fast-engine result of a core."""

    t_high: Any  # s, timing output high (capacitor charging)
    t_low: Any  # s, timing output low
    status: Any  # int array of RUNS / STALLS
    q_supply: Any  # C per period drawn from the supply by the timing network
    q_cross: Any  # C per period of crossing current (chip input between the rails)
    i0_high: Any = 0.0  # A drawn from the output by the timing network as the high phase starts
    i0_low: Any = 0.0  # A drawn from the output as the low phase starts (negative: pushed in)


@dataclass(frozen=True)
class StageFigures:
    """Fast-engine result of a stage, given the driver's phase times."""

    led_peak_a: Any
    flash_s: Any  # s at or above 50 % of peak
    flash_10pct_s: Any  # s at or above 10 % of peak
    led_charge_c: Any  # C through the LED per period
    q_supply: Any  # C per period drawn from the supply by the stage
    load_on: Load  # load during the driver's high phase
    load_off: Load  # load during the driver's low phase
    state: Any = None  # carried between fixed-point passes (pulse/fade residuals)


class Core(Protocol):
    """An oscillator core: everything the rest of the program asks about it."""

    name: str
    chip_kind: ChipKind
    params: tuple[Param, ...]
    drives_stage_from_timing_output: bool
    default_family: str  # chip family when none is named
    bufferable: bool  # may drive its stage through a spare gate
    steers: tuple[Level, ...]  # Topology.steer values worth searching
    search: Any  # CoreSearch: rank, timing search and slow-phase core, read through:
    search_rank: int  # solver order: costliest first (lower first)
    ldr_param: str  # the timing resistor a light-dependent resistor can replace
    timing_search: Literal["one-resistor", "steered", "two-resistor"]  # solver's timing search
    slow_phase_core: str  # the core that times the slow phase alone (itself, or a plainer one)
    dusk_hold: Literal["diode", "reset"]  # held by day through a diode or its RESET pin
    hold_off_steer: bool  # held at the level where its steering diode is off

    def label(self, topo: Topology) -> str: ...

    def extra_parts(self, topo: Topology) -> tuple[ExtraPart, ...]: ...

    def end_currents(self, v: dict[str, Any], env: Env, topo: Topology) -> tuple[Any, Any]:
        """Currents (A) moving C1 as it reaches VT+ (charging) and VT- (discharging),
        with an unloaded output; vectorised."""
        ...

    def timing_resistances(self, v: dict[str, Any]) -> dict[str, Any]:
        """The resistances (ohm) that set each phase, by the name a report shows."""
        ...

    def held_resistance(self, v: dict[str, Any], topo: Topology, output: Level) -> float:
        """Resistance (ohm) from the output (at ``output``) to a timing node held at the
        other rail by the dusk detector (nan where the core is not held that way)."""
        ...

    def spice(self, v: dict[str, float], env: Env, topo: Topology) -> tuple[str, ...]:
        """Its lines in the circuit-simulator netlists (node names: ``SPICE_NODES``)."""
        ...

    def phase_times(self, v: dict[str, Any], env: Env, topo: Topology,
                    high: Drive, low: Drive) -> PhaseTimes: ...

    def ref_currents(self, v: dict[str, float], env: Env, topo: Topology, vo: float,
                     vc: float, high: bool) -> tuple[float, float, float]: ...


class Stage(Protocol):
    """An LED stage: everything the rest of the program asks about it."""

    name: str
    params: tuple[Param, ...]
    n_states: int
    lits: tuple[Level, ...]  # Topology.lit values worth searching
    pulsed: bool  # gives short flashes: an LED's pulsed current rating applies
    steady_load: bool  # draws a steady current from its driver while lit
    gate_carries_led: bool  # the LED current flows through the driving gate's output
    search: Any  # searchgrid.StageSearch: the solver's search sizes
    search_rank: int  # solver and reference-run order: costliest first (lower first)
    search_from_peak_a: float  # A: searched by default only from this aimed peak up (0: always)
    drive_param: str  # the resistor that sets the current drawn from the driver
    dark_driver: dict[Level, Literal["high", "low", "either"]]  # by lit: driver level, LED dark

    def label(self, topo: Topology) -> str: ...

    def extra_parts(self, topo: Topology) -> tuple[ExtraPart, ...]: ...

    def led_note(self, topo: Topology) -> str: ...

    def search_grid(self, ctx: Any, topo: Topology) -> dict[str, Any]:
        """Coarse grid of the stage's values (searchgrid.SearchContext -> arrays)."""
        ...

    def refine(self, ctx: Any, point: dict[str, float]) -> list[dict[str, float]]:
        """The point and its series neighbours."""
        ...

    def driver_peak_a(self, v: dict[str, float], env: Env, topo: Topology,
                      led_peak_a: float) -> float:
        """Peak current (A) drawn from the gate output that drives the stage, at an LED
        peak of ``led_peak_a``."""
        ...

    def spice(self, v: dict[str, float], env: Env, topo: Topology) -> tuple[str, ...]:
        """Its lines in the circuit-simulator netlists (node names: ``SPICE_NODES``)."""
        ...

    def fast(self, v: dict[str, Any], env: Env, topo: Topology, drv: DriverView,
             t_on: Any, t_off: Any, state: Any) -> StageFigures: ...

    def ref_init(self, v: dict[str, float], env: Env, topo: Topology) -> list[float]: ...

    def ref_currents(self, v: dict[str, float], env: Env, topo: Topology, vo: float,
                     xs: Any, driver_high: bool) -> tuple[float, list[float], float, float]: ...


#: The timing capacitor of every core.
TIMING_CAP = Param("c1", "C", "timing capacitor", option="--c",
                   help="timing capacitor C1, e.g. 1u", example="1u")


class _Plain:
    """A circuit labelled by its name alone, whose parts beyond its values are the same
    in every topology (``extras``)."""

    extras: ClassVar[tuple[ExtraPart, ...]] = ()

    def label(self, topo: Topology) -> str:
        return self.name  # type: ignore[attr-defined]

    def extra_parts(self, topo: Topology) -> tuple[ExtraPart, ...]:
        return self.extras


@dataclass(frozen=True)
class CoreSearch:
    """How the solver searches a core's timing network."""

    rank: int  # solver order: costliest first (lower first)
    timing: Literal["one-resistor", "steered", "two-resistor"]
    slow_phase_core: str  # the core that times the slow phase alone (itself, or a plainer one)


@dataclass(frozen=True)
class CoreDefaults(_Plain):
    """What most cores declare alike; a core module's dataclass derives from it and
    declares the rest (see :class:`Core`), its search in one ``search`` (CoreSearch)."""

    drives_stage_from_timing_output: bool = True
    bufferable: bool = True
    steers: tuple[Level, ...] = ("high",)
    #: how the dusk detector holds it still by day: a diode into the timing node, or the
    #: RESET pin (pulsepick.circuits.dusk_hold)
    dusk_hold: str = "diode"
    hold_off_steer: bool = False  # held at the level where a steering diode is off

    @property
    def search_rank(self) -> int:
        return self.search.rank  # type: ignore[attr-defined]

    @property
    def timing_search(self) -> str:
        return self.search.timing  # type: ignore[attr-defined]

    @property
    def slow_phase_core(self) -> str:
        return self.search.slow_phase_core  # type: ignore[attr-defined]


@dataclass(frozen=True)
class StageDefaults(_Plain):
    """What most stages declare alike; a stage module's dataclass derives from it and
    declares the rest (see :class:`Stage`)."""

    n_states: int = 0
    lits: tuple[Level, ...] = ("high",)
    gate_carries_led: bool = True
    search_from_peak_a: float = 0.0  # A: searched by default from this aimed peak up
    drive_param: str = "rs"  # the resistor that sets the current drawn from the driver

    def driver_peak_a(self, v: dict[str, float], env: Env, topo: Topology,
                      led_peak_a: float) -> float:
        """Peak current (A) drawn from the gate output that drives the stage: the LED's
        peak, which flows through it (a fade stage's hold capacitor charges through it
        too, so this is a lower bound there: estimate)."""
        return led_peak_a


@dataclass(frozen=True)
class DriverView:
    """The node that drives the LED stage: levels and source resistances."""

    v_high: Any  # V when driving high
    r_high: Any  # ohm
    v_low: Any  # V when driving low
    r_low: Any  # ohm
    vdd: Any  # V, supply (sink-type stages return to it)
    i_core_high: tuple = (0.0, 0.0)  # A, timing network's draw (at the edge, mean) while high
    i_core_low: tuple = (0.0, 0.0)  # A, the same while low (negative: pushed into the node)

    def high_level(self, at_edge: bool = False):
        """Open-circuit high level seen by the stage, after the timing network's draw."""
        return self.v_high - self.r_high * self.i_core_high[0 if at_edge else 1]

    def low_level(self, at_edge: bool = False):
        """Low level seen by the stage, lifted by current the timing network pushes in."""
        return self.v_low - self.r_low * self.i_core_low[0 if at_edge else 1]


#: Node names a module's ``spice(values, env, topo)`` lines use in the circuit-simulator
#: netlists of ``tests/reference/`` (the harness there supplies the gates and models):
#: ``vdd`` supply, ``tim`` timing node (C1 to ground), ``out`` timing output, ``stn``
#: high while that output is low, ``drv`` the node driving the stage; LED current flows
#: through the zero-volt source ``VLED``; diode models ``DLED``, ``DSTEER``, ``DRESET``,
#: ``DFADE``; switch model ``SWDIS`` (the 555 discharge switch).
SPICE_NODES = ("vdd", "tim", "out", "stn", "drv")


_CORES: dict[str, Any] = {}
_STAGES: dict[str, Any] = {}


def register_core(core: Any) -> Any:
    _CORES[core.name] = core
    return core


def register_stage(stage: Any) -> Any:
    _STAGES[stage.name] = stage
    return stage


def _load_modules() -> None:
    if _CORES and _STAGES:
        return
    import importlib

    from pulsepick.circuits import CIRCUIT_MODULES

    for name in CIRCUIT_MODULES:
        importlib.import_module(f"pulsepick.circuits.{name}")


def get_core(name: str) -> Any:
    _load_modules()
    if name not in _CORES:
        raise CircuitError(f"unknown core {name!r}; accepted: {', '.join(sorted(_CORES))}")
    return _CORES[name]


def get_stage(name: str) -> Any:
    _load_modules()
    if name not in _STAGES:
        raise CircuitError(f"unknown stage {name!r}; accepted: {', '.join(sorted(_STAGES))}")
    return _STAGES[name]


def core_names() -> tuple[str, ...]:
    _load_modules()
    return tuple(_CORES)


def stage_names() -> tuple[str, ...]:
    _load_modules()
    return tuple(_STAGES)


def core_fits_chip(name: str, timer_chip: bool) -> bool:
    """True when core ``name`` runs on a timer chip (``timer_chip``) or a logic gate."""
    return (get_core(name).chip_kind == "timer") == bool(timer_chip)


def value_params() -> dict[str, Param]:
    """Every component value the registered circuits take, by name, in the order the
    command line lists them: the cores' resistors, their capacitors, then the stages'
    capacitors and resistors (the first module to declare a name describes it)."""
    _load_modules()
    core_params = [p for c in _CORES.values() for p in c.params]
    stage_params = [p for s in _STAGES.values() for p in s.params]
    out: dict[str, Param] = {}
    for group in ([p for p in core_params if p.kind == "R"],
                  [p for p in core_params if p.kind == "C"],
                  [p for p in stage_params if p.kind == "C"],
                  [p for p in stage_params if p.kind == "R"]):
        for p in group:
            out.setdefault(p.name, p)
    return out


def check_values(topo: Topology, values: dict[str, Any]) -> dict[str, Any]:
    """Fill optional defaults and refuse missing, zero or negative values.

    Returns a new mapping holding exactly the parameters the topology uses.
    """
    core, stage = get_core(topo.core), get_stage(topo.stage)
    if topo.buffered and not core.bufferable:
        raise CircuitError("a buffer gate is only used with Schmitt cores; the 555 output "
                           f"already drives the stage (drop {hint('buffered', True)})")
    out: dict[str, Any] = {}
    problems = []
    for p in core.params + stage.params:
        if p.name not in values or values[p.name] is None:
            if p.optional:
                out[p.name] = p.default
                continue
            problems.append(f"{p.name} ({p.role}) is missing")
            continue
        val = values[p.name]
        arr = np.asarray(val, dtype=float)
        minimum_ok = (arr >= 0) if p.optional else (arr > 0)
        if not np.all(np.isfinite(arr)) or not np.all(minimum_ok):
            problems.append(f"{p.name} ({p.role}) must be a positive, finite value")
            continue
        out[p.name] = val
    known = {p.name for p in core.params + stage.params}
    extra = sorted(set(values) - known)
    if extra:
        problems.append(f"{', '.join(extra)} not used by {topo.core} + {topo.stage} "
                        f"(it uses {', '.join(sorted(known))})")
    if problems:
        raise CircuitError("; ".join(problems))
    return out
