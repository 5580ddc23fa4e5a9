"""What the API functions return: :class:`Result` (the core result and its ``--json``
document, with a one-line summary and a table view) and :class:`CheckOutcome`."""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from typing import Any

from pulsepick.errors import RequestError


@dataclass(frozen=True)
class Result:
    """What a command computed: the core result and its ``--json`` document.

    Attributes
    ----------
    command : str
        ``"solve"``, ``"check"``, ``"night"``, ``"day"``, ``"bands"`` or ``"values"``.
    options : dict
        The arguments as given (for the record).
    result : object
        The core result: ``SolveResult`` (or ``BuildResult`` for several lights),
        a ``CheckOutcome``, ``NightResult``, ``DaysResult``, ``BandsResult``; for
        ``values`` the document itself.
    data : dict
        The ``--json`` document (use :meth:`to_dict`, which returns a copy).
    """

    command: str
    options: dict[str, Any]
    result: Any = field(repr=False)
    data: dict[str, Any] = field(repr=False)

    def to_dict(self) -> dict[str, Any]:
        """The same content as the command's ``--json`` output (a fresh copy)."""
        return copy.deepcopy(self.data)

    def summary(self) -> str:
        """One line saying what was computed."""
        try:
            return _SUMMARIES[self.command](self.data)
        except (KeyError, TypeError, IndexError):  # another form (e.g. --size): its keys
            return "keys " + ", ".join(list(self.data)[:8])

    def __repr__(self) -> str:
        first = self.options.get("_arg")
        what = "" if first is None else f" {first}"
        return f"<pulsepick {self.command}{what}: {self.summary()}>"

    def to_frame(self):
        """The candidates, the night, the days, the bands or the values as a table.

        Needs pandas (an optional dependency: ``pip install pandas``).
        """
        try:
            import pandas as pd
        except ImportError as err:
            raise RequestError("to_frame() needs pandas, which pulsepick does not install; "
                               "install it with 'pip install pandas'") from err
        return pd.DataFrame(_ROWS[self.command](self.data))


@dataclass(frozen=True)
class CheckOutcome:
    """A checked circuit: its design, figures, reference run and findings."""

    design: Any  # pulsepick.design.Design
    figures: dict[str, Any]  # SI figures and the status word
    reference: Any  # the reference simulation, or None
    findings: tuple  # what the checks found
    engine: str  # "fast" or "reference"


# ---------------------------------------------------------------------------- summaries

def _eng(x: Any, unit: str) -> str:
    from pulsepick.units import format_figure

    return format_figure(x, unit)


def _solve_summary(d: dict) -> str:
    if "lights" in d:
        return f"{len(d['lights'])} lights; {d['message']}"
    cands = d["candidates"]
    if not cands:
        return f"nothing offered; {d['message']}"
    best = cands[0]
    f = best["figures"]
    return (f"{len(cands)} circuit{'s' if len(cands) != 1 else ''}; #1 {best['label']} on "
            f"{best['family']}: period {_eng(f['period_s'], 's')}, flash "
            f"{_eng(f['flash_s'], 's')}, peak {_eng(f['led_peak_a'], 'A')}")


def _check_summary(d: dict) -> str:
    return (f"{d['assumptions']['circuit']} {d['status']['state']}: period "
            f"{_eng(d['period_s'], 's')}, peak {_eng(d['led_peak_a'], 'A')}, supply "
            f"{_eng(d['supply_avg_a'], 'A')}")


def _night_summary(d: dict) -> str:
    return (f"{d['stop_reason']}; {_eng(d['v_start_v'], 'V')} -> {_eng(d['v_end_v'], 'V')}, "
            f"{d['flashes']:.0f} flashes")


def _day_summary(d: dict) -> str:
    return (f"{len(d['days'])} days, {d['nights_lasted']} nights lasted, autonomy "
            f"{d['autonomy_nights']} nights")


def _bands_summary(d: dict) -> str:
    q = d["current"]["quantiles"]["period_s"]
    return (f"{d['design']['circuit']}: period P5 {_eng(q['p5'], 's')} .. P95 "
            f"{_eng(q['p95'], 's')} over {d['builds']} builds, mostly from "
            f"{d['dominant_source_label']}")


def _values_summary(d: dict) -> str:
    if "mantissas" in d:
        return f"{d['series']}, {d['count']} values per decade"
    if "in_series" in d:
        return f"{d['value_eng']} ({d['code']}), in {', '.join(d['in_series']) or 'no series'}"
    if isinstance(d.get("nearest"), dict):
        n, b, a = d["nearest"], d["below"], d["above"]
        return (f"nearest in {d['series']}: {n['value_eng']} ({n['code']}, "
                f"{n['error_pct']:+.2f} %); below {b['code']}, above {a['code']}")
    return ", ".join(f"{k}" for k in d)


def _doc_summary(d: dict) -> str:
    return "keys " + ", ".join(list(d)[:8])


_SUMMARIES = {"calibrate": _doc_summary, "retune": _doc_summary, "solve": _solve_summary,
              "check": _check_summary, "night": _night_summary,
              "day": _day_summary, "bands": _bands_summary, "values": _values_summary}


# ---------------------------------------------------------------------------- tables

def _solve_rows(d: dict) -> list[dict]:
    if "lights" in d:
        return [{"light": li["name"], "asked_period_s": li["asked_period_s"],
                 **_cand_row(li["circuit"])} for li in d["lights"] if li["circuit"]]
    return [_cand_row(c) for c in d["candidates"]]


def _cand_row(c: dict) -> dict:
    f = c["figures"] or {}
    spread = c.get("spread") or {}
    return {"rank": c["rank"], "circuit": c["label"], "chip": c["family"],
            "parts": " ".join(p["code"] for p in c["parts"] if p["kind"] in ("resistor",
                                                                            "capacitor")),
            "period_s": f.get("period_s"), "median_period_s": c.get("median_period_s"),
            "flash_s": f.get("flash_s"), "led_peak_a": f.get("led_peak_a"),
            "effective_a": f.get("effective_a"), "supply_avg_a": f.get("supply_avg_a"),
            "period_p5_s": spread.get("quantiles", {}).get("period_s", {}).get("p5"),
            "period_p95_s": spread.get("quantiles", {}).get("period_s", {}).get("p95"),
            "yield": spread.get("yield"), "score": c["score"]}


def _check_rows(d: dict) -> list[dict]:
    return [{k: v for k, v in d.items() if k not in ("assumptions", "warnings", "status")}
            | {"status": d["status"]["state"]}]


def _night_rows(d: dict) -> list[dict]:
    if "timeline" not in d:
        return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]
    t = d["timeline"]
    n = len(t["t_s"])
    return [{k: t[k][i] for k in t} for i in range(n)]


def _day_rows(d: dict) -> list[dict]:
    if "days" not in d:
        return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]
    return [{k: v for k, v in day.items() if not isinstance(v, (list, dict))}
            for day in d["days"]]


def _bands_rows(d: dict) -> list[dict]:
    return [dict(cell) for cell in d["cells"]]


def _values_rows(d: dict) -> list[dict]:
    if "mantissas" in d:
        return [{"series": d["series"], "mantissa": m} for m in d["mantissas"]]
    if isinstance(d.get("nearest"), list):
        return list(d["nearest"])
    return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]


def _doc_rows(d: dict) -> list[dict]:
    return [{k: v for k, v in d.items() if not isinstance(v, (dict, list))}]


_ROWS = {"calibrate": _doc_rows, "retune": _doc_rows, "solve": _solve_rows,
         "check": _check_rows, "night": _night_rows, "day": _day_rows,
         "bands": _bands_rows, "values": _values_rows}
