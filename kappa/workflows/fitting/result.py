"""What a fit returns: fitted values with uncertainties, per-sample curves, statistics."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kappa.core.model import Model
from kappa.core.parameters import Parameter
from kappa.workflows.fitting.data import FitData

__all__ = ["FittedParameter", "SampleFit", "FitResult"]


@dataclass(frozen=True)
class FittedParameter:
    """A fitted value with its uncertainty (values in SI).

    ``stderr`` is the delta-method standard error; ``low68``/``high68`` the 68 % interval
    (exp(u ± σ_u) for log-space parameters). ``at_bound`` is ``""``, ``"lower"``, ``"upper"``
    or ``"search limit"``.
    """

    key: str
    sample: str | None
    value: float
    stderr: float
    low68: float
    high68: float
    start: float
    parameter: Parameter
    space: str
    at_bound: str

    @property
    def label(self) -> str:
        return self.key if self.sample is None else f"{self.sample}:{self.key}"

    @property
    def unit(self) -> str:
        """SI unit of the values."""
        return self.parameter.unit

    @property
    def display(self) -> str:
        """Unit the values are shown in."""
        return self.parameter.shown_unit

    def shown(self, value: float) -> float:
        """``value`` [SI] converted to the display unit."""
        return float(self.parameter.shown(value))


@dataclass(frozen=True)
class SampleFit:
    """Data, fitted curve and residuals of one sample.

    ``residual`` is measured − model, κ − κ_fit [W/(m K)]; ``relative`` is ln κ − ln κ_fit [1];
    ``normalized`` is the residual the fit minimised with the same sign ((κ − κ_fit)/σ, or the
    relative residual).
    """

    name: str
    data: FitData
    kappa_L_fit: np.ndarray
    residual: np.ndarray
    relative: np.ndarray
    normalized: np.ndarray
    model: Model = field(repr=False)
    start_model: Model = field(repr=False)


@dataclass(frozen=True)
class FitResult:
    """Outcome of :func:`~kappa.workflows.fitting.fit` or
    :func:`~kappa.workflows.fitting.fit_series`.

    Attributes
    ----------
    parameters : tuple of FittedParameter
    samples : tuple of SampleFit
    u, covariance : ndarray
        Optimum and covariance in the transformed space (ln value for log-space parameters).
    correlation : ndarray
    weighted : bool
        True when the residuals were weighted by measurement uncertainties (absolute χ²).
    n_points, n_free, dof : int
    chi2 : float
        Σ r_i² at the optimum (weighted: χ²; unweighted: RSS of the log residuals).
    chi2_red : float or None
        χ²/dof for weighted fits; None otherwise.
    scatter : float
        RMS of the residuals the covariance is scaled with (unweighted: relative, s).
    aic, bic : float
    starts, converged, nfev : int
        Number of starts, how many reached the best minimum, model evaluations.
    delta_bic : dict
        BIC with each parameter held at its start minus BIC of the fit.
    warnings : tuple of str
    citations : list of str
    spaces : tuple of str
    """

    parameters: tuple[FittedParameter, ...]
    samples: tuple[SampleFit, ...]
    u: np.ndarray
    covariance: np.ndarray
    correlation: np.ndarray
    weighted: bool
    n_points: int
    n_free: int
    dof: int
    chi2: float
    chi2_red: float | None
    scatter: float
    aic: float
    bic: float
    starts: int
    converged: int
    nfev: int
    delta_bic: dict[str, float]
    warnings: tuple[str, ...]
    citations: list[str]
    spaces: tuple[str, ...]

    @property
    def model(self) -> Model:
        """The fitted model of the first (for a single fit: the only) sample."""
        return self.samples[0].model

    def value(self, key: str, sample: str | None = None) -> float:
        """Fitted SI value of ``key`` (per-sample parameters need ``sample``)."""
        return self.parameter(key, sample).value

    def parameter(self, key: str, sample: str | None = None) -> FittedParameter:
        for p in self.parameters:
            if p.key == key and (p.sample is None or p.sample == sample):
                return p
        raise KeyError(key)

    @property
    def weighting(self) -> str:
        if self.weighted:
            return "weighted by the measurement uncertainties (absolute chi-square)"
        return ("no uncertainties given: relative residuals ln(kappa/kappa_fit), errors scaled "
                "by the residual scatter")
