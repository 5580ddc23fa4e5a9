"""The lock risk of a several-lights build: its table in the report and its JSON.

Two lights on one package whose periods sit near a simple ratio (1:1, 2:3 ...) may lock
together; the table shows each pair's ratio, its spread over the builds, the nearest
simple ratio and the share of builds near a lock.
"""

from __future__ import annotations


def render_lock_risks(console, result, names) -> None:
    """The lock risk table and the share of builds with any pair near a lock."""
    from pulsepick.output.render import print_wrapped, simple_table

    breq = result.request
    if result.risks:
        share = result.lock_share
        rows = []
        for r in result.risks:
            band = "-" if r.band[0] != r.band[0] else f"{r.band[0]:.3f}..{r.band[1]:.3f}"
            ps = share.pair(r.a, r.b) if share is not None else None
            rows.append([f"{names[r.a]} / {names[r.b]}", f"{r.ratio:.3f}", band,
                         ps.nearest if ps is not None and ps.share > 0 else r.nearest,
                         f"{ps.share:.1%}" if ps is not None else "-"])
        console.print(simple_table(
            f"Lock risk: share of builds with a pair within {breq.lock_margin:.0%} of p:q, "
            "q <= 4",
            ["pair", "ratio", "P5..P95", "nearest", "lock share"], rows,
            justify=["left", "right", "right", "right", "right"]))
        if share is not None:
            per_pkg = ", ".join(f"U{g} {v:.1%}" for g, v in sorted(share.packages.items()))
            print_wrapped(console, f"any pair near a lock: {share.share:.1%} of "
                                   f"{share.builds:,} builds (seed {share.seed}; {per_pkg}); "
                                   "each light's own parts vary, the package's thresholds, "
                                   "supply and temperature are shared")
        console.print()


def _risk_json(names, r) -> dict:
    return {"lights": [names[r.a], names[r.b]], "ratio": r.ratio,
            "band_p5": r.band[0], "band_p95": r.band[1], "nearest": r.nearest,
            "nominal_near": r.nominal_near, "band_near": r.band_near,
            "clearance": r.clearance, "at_risk": r.at_risk}


def _share_json(names, share) -> dict | None:
    """The lock share (pulsepick.analysis.lock.LockShare) as plain data."""
    if share is None:
        return None
    return {"lock_share": share.share, "stderr": share.stderr, "builds": share.builds,
            "seed": share.seed, "margin": share.margin, "max_q": share.max_q,
            "packages": [{"ref": f"U{g}", "lock_share": v}
                         for g, v in sorted(share.packages.items())],
            "pairs": [{"lights": [names[p.a], names[p.b]], "package": f"U{p.package}",
                       "lock_share": p.share, "nearest": p.nearest} for p in share.pairs]}


def _lock_grade(share: float) -> str:
    from pulsepick.analysis.lock import lock_grade

    return lock_grade(share)
