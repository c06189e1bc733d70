"""What-if intervals on the command line: the ``--fit FIT.json`` option of predict, sweep and
alloy (reading and checking the record, terminal summary, record section)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import typer

from kappa.cli import common

__all__ = ["load_fit", "print_flags", "record", "FIT_HELP"]

FIT_HELP = ("fit.json written by 'kappa fit' for this config (the fitted.yaml beside it): "
            "adds 68 % intervals from the fit's covariance to every answer.")


def load_fit(path: Path, model, option: str = "--fit"):
    """The covariance of a fit record, checked to belong to ``model`` (one error line
    naming the key otherwise)."""
    from kappa.errors import KappaError
    from kappa.io.fitfiles import read_fit_record
    from kappa.workflows.whatif import check_covariance

    cov = read_fit_record(path, option)
    try:
        check_covariance(model, cov)
    except KappaError as exc:
        raise exc.renamed(f"{option} {Path(path).name}: {exc.key}") from None
    return cov


def _pct(r: float) -> str:
    return f"{100 * (r - 1):+.3g} %"


def print_flags(w, labels: list[str], most: int = 12) -> None:
    """One line per scenario and temperature that the data do not pin (at most ``most``),
    then a count."""
    bad = np.argwhere(~w.pinned)
    if not bad.size:
        typer.echo("every what-if answer is pinned by the data (68 % intervals of the change "
                   "exclude no change and span at most a factor of two)")
        return
    for s, t in bad[:most]:
        typer.echo(f"not pinned by the data: {labels[s]} at {w.temperature[t]:.4g} K: change "
                   f"{_pct(w.ratio[s, t])} (68 %: {_pct(w.ratio_low[s, t])} .. "
                   f"{_pct(w.ratio_high[s, t])}) — {w.reason(s, t)}")
    if len(bad) > most:
        typer.echo(f"... and {len(bad) - most} more (column pinned = 0 in the table)")
    common.echo_err(f"note: {len(bad)} of {w.pinned.size} what-if answers are not pinned by "
                    "the data: equally good fits give different answers; measure more before "
                    "trusting them")


def record(w, source: Path, seed: int) -> dict:
    """The run.json section of the what-if intervals."""
    return {"fit_record": str(source), "draws": w.draws, "rejected": w.rejected, "seed": seed,
            "fitted_keys": list(w.fitted_keys),
            "interval": "68 % (15.87th to 84.13th percentile over parameter sets drawn from "
                        "the fit's covariance)",
            "ratio": "kappa_L of the scenario over kappa_L of the fitted sample, per draw",
            "not_pinned": int((~w.pinned).sum()), "answers": int(w.pinned.size),
            "pinned_rule": "the 68 % interval of the change (ratio - 1) excludes no change and "
                           "spans at most a factor of two, and the kappa_L interval spans at "
                           "most a factor of two",
            "notes": list(w.notes)}
