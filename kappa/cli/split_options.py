"""Options of ``kappa split``: parsed and checked before anything is read or written."""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from kappa.core.electronic import LORENZ_MODELS
from kappa.errors import DataError
from kappa.io.units import parse_quantity, parse_window
from kappa.workflows.measurements import NAN_POLICIES
from kappa.workflows.split import DRAW_RANGE, EXPONENT_RANGE, UNCERTAINTY_KEYS
from kappa.workflows.uncertainty import MAX_RELATIVE

__all__ = ["Options", "parse_options", "parse_lorenz", "parse_uncertainty",
           "parse_run_options", "parse_cahill"]


def parse_lorenz(text: str) -> str | float:
    """``spb|degenerate|nondegenerate|kim`` or a number (W Ohm/K^2, a unit may be written)."""
    t = text.strip()
    if t in LORENZ_MODELS:
        return t
    allowed = (f"{', '.join(LORENZ_MODELS)} or a number in W Ohm/K^2 (e.g. 2.0e-8)")
    try:
        value = parse_quantity(t, "W*ohm/K^2", "--lorenz", error=DataError)
    except DataError:
        raise DataError("--lorenz", text, allowed) from None
    if not 0 < value < 1e-6:
        raise DataError("--lorenz", text, allowed + "; values near 2e-8 are usual")
    return value


def _relative(text: str, where: str, allowed: str) -> float:
    t = text.strip()
    try:
        v = float(t[:-1]) / 100.0 if t.endswith("%") else float(t)
    except ValueError:
        raise DataError(where, text, allowed) from None
    if math.isnan(v) or not 0.0 <= v <= MAX_RELATIVE:
        raise DataError(where, text, f"a relative uncertainty from 0 to {MAX_RELATIVE:g} "
                        f"({100 * MAX_RELATIVE:g}%), e.g. 0.08 or 8%")
    return v


def parse_uncertainty(text: str | None) -> dict[str, float | tuple[float, float]]:
    """``kappa=0.08+0.02,sigma=5%,S=0.05+1%`` -> relative uncertainties per quantity.

    ``KEY=SYSTEMATIC`` sets the systematic part (shared by all temperatures; the random part
    keeps its default); ``KEY=SYSTEMATIC+RANDOM`` sets both (the random part is independent
    from row to row). Values are relative, as fractions (0.08) or percentages (8%).
    """
    out: dict[str, float | tuple[float, float]] = {}
    if not text:
        return out
    allowed = (f"comma-separated KEY=SYSTEMATIC or KEY=SYSTEMATIC+RANDOM with keys "
               f"{', '.join(UNCERTAINTY_KEYS)} and relative values (0.08 or 8%), e.g. "
               "kappa=0.08+0.02,sigma=0.05,S=5%+1%")
    for item in text.split(","):
        if not item.strip():
            continue
        key, sep, value = item.partition("=")
        key, value = key.strip(), value.strip()
        if not sep or key not in UNCERTAINTY_KEYS:
            import difflib

            close = difflib.get_close_matches(key, UNCERTAINTY_KEYS, n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close and sep else ""
            raise DataError("--uncertainty", item.strip(), hint + allowed)
        parts = re.split(r"(?<![eE])\+", value)
        if len(parts) > 2 or not all(p.strip() for p in parts):
            raise DataError(f"--uncertainty {key}", value, allowed)
        name = "sigma" if key == "resistivity" else key
        sys_ = _relative(parts[0], f"--uncertainty {key} (systematic part)", allowed)
        if len(parts) == 1:
            out[name] = sys_
        else:
            out[name] = (sys_, _relative(parts[1], f"--uncertainty {key} (random part)",
                                         allowed))
    return out


def parse_run_options(draws: int, seed: int, scattering_exponent: float) -> None:
    """Check --draws, --seed and --scattering-exponent before anything is read."""
    low, high = DRAW_RANGE
    if not low <= draws <= high:
        raise DataError("--draws", draws, f"from {low:,} to {high:,} Monte Carlo draws "
                        "(2,000 give bands good to about 3 %)")
    if seed < 0:
        raise DataError("--seed", seed, "a whole number >= 0 (the same seed gives the same "
                        "draws)")
    lo, hi = EXPONENT_RANGE
    if not lo <= scattering_exponent <= hi:
        raise DataError("--scattering-exponent", scattering_exponent,
                        f"from {lo:g} to {hi:g} (lambda in tau ~ E^(lambda-1/2): 0 acoustic "
                        "phonons, 1 polar optical, 2 ionized impurities)")


def parse_cahill(number_density: str | None,
                 velocities: list[str] | None) -> tuple[float | None, list[float] | None]:
    if number_density is None and not velocities:
        return None, None
    if number_density is None or not velocities:
        raise DataError("--number-density/--sound-velocity", "only one given",
                        "give both for the Cahill minimum (e.g. --number-density '4.99e28 1/m^3'"
                        " --sound-velocity '8.95 km/s' --sound-velocity '5.35 km/s')")
    n = parse_quantity(number_density, "1/m^3", "--number-density", error=DataError)
    if not n > 0:
        raise DataError("--number-density", number_density, "must be > 0 (atoms per volume)")
    if len(velocities) > 3:
        raise DataError("--sound-velocity", ", ".join(velocities),
                        "1 to 3 values (one for all branches; v_L, v_T; or v_L, v_T1, v_T2)")
    vs = []
    for v in velocities:
        x = parse_quantity(v, "m/s", "--sound-velocity", error=DataError)
        if not x > 0:
            raise DataError("--sound-velocity", v, "must be > 0 m/s")
        vs.append(x)
    return n, vs


@dataclass(frozen=True)
class Options:
    """The validated options of one ``kappa split`` run (shared by every sample of a series)."""

    lorenz: str | float
    scattering_exponent: float
    uncertainty: dict
    window: tuple[float, float] | None
    nan: str
    draws: int
    seed: int
    number_density: float | None
    velocities: list[float] | None

    def record(self) -> dict:
        return {"lorenz": self.lorenz, "scattering_exponent": self.scattering_exponent,
                "fit_window [K]": list(self.window) if self.window else "automatic",
                "nan": self.nan, "draws": self.draws, "seed": self.seed,
                "number_density [1/m^3]": self.number_density,
                "sound_velocities [m/s]": self.velocities}


def parse_options(lorenz, scattering_exponent, uncertainty, window_text, nan, draws, seed,
                  number_density, sound_velocity) -> Options:
    """Validate every option before anything is read or written."""
    model = parse_lorenz(lorenz)
    unc = parse_uncertainty(uncertainty)
    window = parse_window(window_text, "--window", error=DataError)
    n_density, velocities = parse_cahill(number_density, sound_velocity)
    if nan not in NAN_POLICIES:
        raise DataError("--nan", nan, "raise or omit")
    parse_run_options(draws, seed, scattering_exponent)
    return Options(model, scattering_exponent, unc, window, nan, draws, seed, n_density,
                   velocities)
