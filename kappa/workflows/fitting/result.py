"""What a fit returns: fitted values with uncertainties, per-sample curves, statistics."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kappa.core.model import Model
from kappa.core.parameters import Parameter
from kappa.workflows.fitting.data import FitData

__all__ = ["FittedParameter", "FittedScale", "SampleFit", "FitResult"]


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
class FittedScale:
    """The shared (systematic) scale of one sample's data, a nuisance parameter of the fit.

    The fit models the sample's points as κ_model,i (1 + z w_i) with z ~ N(0, 1) a priori and
    w_i = systematic_i/κ_i the stated relative systematic uncertainty of each point. ``z`` is
    the fitted value in units of that width, ``z_stderr`` its standard error; ``factor`` is
    1 + z w̄ with w̄ the median of w_i (the data lie ``factor`` times above the model),
    ``low68``/``high68`` 1 + (z ∓ z_stderr) w̄.
    """

    sample: str
    width: float
    z: float
    z_stderr: float

    @property
    def factor(self) -> float:
        return 1.0 + self.z * self.width

    @property
    def low68(self) -> float:
        return 1.0 + (self.z - self.z_stderr) * self.width

    @property
    def high68(self) -> float:
        return 1.0 + (self.z + self.z_stderr) * self.width


@dataclass(frozen=True)
class SampleFit:
    """Data, fitted curve and residuals of one sample.

    ``kappa_L_fit`` is the fitted model; ``scale_factor`` (None without a shared scale) the
    fitted scale of the data at each point, 1 + z w_i. ``residual`` is measured − model × scale,
    κ − κ_fit·f [W/(m K)]; ``relative`` is ln κ − ln(κ_fit·f) [1]; ``normalized`` is the
    residual the fit minimised with the same sign ((κ − κ_fit·f)/σ, or the relative residual).
    """

    name: str
    data: FitData
    kappa_L_fit: np.ndarray
    residual: np.ndarray
    relative: np.ndarray
    normalized: np.ndarray
    model: Model = field(repr=False)
    start_model: Model = field(repr=False)
    scale_factor: np.ndarray | None = None


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
    errors : str
        How the data's uncertainties were used: ``separate`` (random part as noise, one shared
        scale per sample with a systematic part), ``total``/``random`` (independent per point)
        or ``none``.
    scales : tuple of FittedScale
        The shared scale of each sample with a systematic uncertainty.
    full_covariance : ndarray
        Joint covariance of the parameters (transformed space) and the scales (z); the
        parameters' block equals ``covariance``.
    full_labels : tuple of str
        Labels of its rows: the parameters', then ``scale:SAMPLE``.
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
    errors: str = ""
    scales: tuple[FittedScale, ...] = ()
    full_covariance: np.ndarray | None = None
    full_labels: tuple[str, ...] = ()

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
        if self.weighted and self.scales:
            return ("weighted by the random (point-to-point) uncertainties, with one shared "
                    "scale per sample for the systematic part (a nuisance parameter with a "
                    "Gaussian prior of the stated width; absolute chi-square)")
        if self.weighted and self.errors == "random":
            return ("weighted by the random (point-to-point) uncertainties only; the shared "
                    "calibration error is not in the parameter errors (absolute chi-square)")
        if self.weighted:
            return ("weighted by the measurement uncertainties, taken as independent from "
                    "point to point (absolute chi-square)")
        return ("no uncertainties given: relative residuals ln(kappa/kappa_fit), errors scaled "
                "by the residual scatter")
