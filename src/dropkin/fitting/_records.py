"""The results of the fits: :class:`LawFit` (one law) and :class:`BlendFit` (two regimes).

Plain frozen records, falsy when the data could not support the fit (the
reason is in ``message``). They are built by :mod:`._linear` and
:mod:`._two_laws` and given bootstrap intervals by :mod:`._bootstrap`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ._core import LawShape

__all__ = ["LawFit", "BlendFit"]


@dataclass(frozen=True)
class LawFit:
    """The result of fitting one law to a radius series.

    Attributes
    ----------
    success : bool
        Whether the data could support the fit; the record is falsy otherwise.
    message : str
        Why it failed, or ``""``.
    law : str
        ``"power"`` or ``"log"``.
    exponent : float
        n. For the log law, the exponent a weighted power-law fit would report
        if the fitted law held exactly over the points (docs/physics.md §2 A1).
    exponent_err : float
        Standard error of n (NaN when n is fixed).
    exponent_ci : tuple of float
        95 % interval of n (normal approximation, or bootstrap percentiles; see
        `ci_method`); ``(n, n)`` when fixed.
    exponent_fixed : bool
        True when n was not fitted.
    prefactor : float
        A in ``r = A τ**n`` (m s⁻ⁿ); for the log law ``A = C u`` in
        ``r = -A τ ln(uτ/R)`` (m/s).
    prefactor_err : float
        Standard error of A.
    prefactor_ci : tuple of float
        95 % interval of A.
    t0 : float
        The origin (s, same clock as the input times).
    t0_err : float
        Standard error of t0 (0 when fixed; the bracket bounds it anyway).
    t0_free : bool
        Whether t0 was fitted inside `t0_bracket`.
    t0_bracket : tuple of float
        The interval t0 was allowed in (s).
    t0_ci : tuple of float
        95 % interval of t0: bootstrap percentiles of the refitted t0, or the
        normal approximation cut to `t0_bracket`; ``(t0, t0)`` when fixed.
    pivot_time : float
        ``t_p = exp(weighted mean ln τ)`` (s since t0).
    pivot_radius : float
        ``r_p = A t_p**n`` (m): the decorrelated prefactor.
    pivot_radius_ci : tuple of float
        95 % interval of r_p.
    correlation_raw : float
        Correlation of ``ln A`` and n (NaN when n is fixed).
    correlation_pivot : float
        Correlation of ``ln r_p`` and n (near 0 by construction).
    n_points : int
        Points used.
    window : tuple of float
        First and last time since t0 of the points used (s).
    decades : float
        ``log10`` of their ratio.
    chi2 : float
        Sum of squared normalised residuals ``((ln r - model)/σ)²``.
    aic, bic : float
        ``N ln(chi2/N) + 2k`` and ``N ln(chi2/N) + k ln N`` (Gaussian
        likelihood with the noise scale estimated; k counts t0 when free).
    n_params : int
        k.
    noise_scale : float
        The noise unit used by the robust loss (in units of the given σ).
    residual_rms : float
        Root mean square of the residuals of ``ln r``.
    loss : str
        ``"soft_l1"`` or ``"linear"``.
    ci_method : str
        How the intervals were obtained.
    n_resamples : int
        Bootstrap resamples (0 for the normal approximation).
    outside_ci : tuple of str
        Names of the quantities (``exponent``, ``prefactor``,
        ``pivot_radius``, ``t0``, ``initial_radius``) whose estimate lies
        outside its bootstrap percentile interval: the resamples disagree
        with the fit, which the intervals do not hide.
    initial_radius : float
        r0 in ``r = r0 + A τ**n`` (m); 0 when the law without r0 was chosen.
    initial_radius_ci : tuple of float
        Its 95 % interval (``(0, 0)`` when not chosen).
    initial_radius_fitted : bool
        True when the law with r0 was chosen (by the information criterion).
    initial_radius_delta_aic : float
        AIC without r0 minus AIC with it (NaN when r0 was not tried); r0 is
        chosen when this exceeds :data:`dropkin.fitting.INITIAL_RADIUS_AIC_GAIN`.
    """

    success: bool
    message: str
    law: str
    exponent: float = math.nan
    exponent_err: float = math.nan
    exponent_ci: tuple[float, float] = (math.nan, math.nan)
    exponent_fixed: bool = False
    prefactor: float = math.nan
    prefactor_err: float = math.nan
    prefactor_ci: tuple[float, float] = (math.nan, math.nan)
    t0: float = math.nan
    t0_err: float = math.nan
    t0_free: bool = False
    t0_bracket: tuple[float, float] = (math.nan, math.nan)
    t0_ci: tuple[float, float] = (math.nan, math.nan)
    pivot_time: float = math.nan
    pivot_radius: float = math.nan
    pivot_radius_ci: tuple[float, float] = (math.nan, math.nan)
    correlation_raw: float = math.nan
    correlation_pivot: float = math.nan
    n_points: int = 0
    window: tuple[float, float] = (math.nan, math.nan)
    decades: float = math.nan
    chi2: float = math.nan
    aic: float = math.nan
    bic: float = math.nan
    n_params: int = 0
    noise_scale: float = math.nan
    residual_rms: float = math.nan
    loss: str = "soft_l1"
    ci_method: str = ""
    n_resamples: int = 0
    outside_ci: tuple[str, ...] = ()
    initial_radius: float = 0.0
    initial_radius_ci: tuple[float, float] = (0.0, 0.0)
    initial_radius_fitted: bool = False
    initial_radius_delta_aic: float = math.nan

    def __bool__(self) -> bool:
        return self.success


@dataclass(frozen=True)
class BlendFit:
    """A two-regime fit.

    Attributes
    ----------
    success : bool
        Whether the data supported the fit; falsy otherwise.
    message : str
        Why it failed, or ``""``.
    model : str
        ``"harmonic"`` (sharpness fixed at 1), ``"blend"`` (another or a free
        sharpness) or ``"broken"``.
    early_exponent, late_exponent : float
        The two exponents (for a log law, its leading power 1).
    early_exponent_ci, late_exponent_ci : tuple of float
        Their 95 % intervals (``(n, n)`` when fixed).
    exponents_fixed : bool
        True when both laws had their exponents fixed.
    early_shape, late_shape : LawShape or None
        The fixed law forms; None where the exponent was free.
    early_prefactor, late_prefactor : float
        ``A_1``, ``A_2`` (m s⁻ⁿ; ``C u`` for a log law, m/s).
    early_prefactor_ci, late_prefactor_ci : tuple of float
        Their 95 % intervals.
    crossover_time : float
        τ_c, time since t0 at which the two laws give the same radius (s).
    crossover_time_ci : tuple of float
        Its 95 % interval.
    crossover_radius : float
        The laws' common radius at τ_c (m).
    sharpness : float
        s (NaN for the broken power law).
    sharpness_fixed : bool
        Whether s was fixed.
    direction : int
        -1 when the early law is the smaller radius at first (min-type blend),
        +1 when it is the larger (max-type).
    t0 : float
        The origin (s, same clock as the input).
    t0_free : bool
        Whether t0 was fitted inside `t0_bracket`.
    t0_bracket : tuple of float
        The interval allowed for t0.
    t0_ci : tuple of float
        95 % interval of t0 (as for :class:`LawFit`).
    n_points : int
        Points used.
    window : tuple of float
        First and last time since t0 of the points (s).
    chi2 : float
        Sum of squared normalised residuals of ``ln r``.
    aic, bic : float
        As for :class:`LawFit`.
    n_params : int
        Fitted parameters, t0 included when free.
    loss : str
        ``"soft_l1"`` or ``"linear"``.
    ci_method : str
        How the intervals were obtained.
    n_resamples : int
        Bootstrap resamples (0 for the normal approximation).
    outside_ci : tuple of str
        Names of the quantities whose estimate lies outside its bootstrap
        percentile interval (as for :class:`LawFit`).
    """

    success: bool
    message: str
    model: str
    early_exponent: float = math.nan
    late_exponent: float = math.nan
    early_exponent_ci: tuple[float, float] = (math.nan, math.nan)
    late_exponent_ci: tuple[float, float] = (math.nan, math.nan)
    exponents_fixed: bool = False
    early_shape: LawShape | None = None
    late_shape: LawShape | None = None
    early_prefactor: float = math.nan
    late_prefactor: float = math.nan
    early_prefactor_ci: tuple[float, float] = (math.nan, math.nan)
    late_prefactor_ci: tuple[float, float] = (math.nan, math.nan)
    crossover_time: float = math.nan
    crossover_time_ci: tuple[float, float] = (math.nan, math.nan)
    crossover_radius: float = math.nan
    sharpness: float = math.nan
    sharpness_fixed: bool = False
    direction: int = -1
    t0: float = math.nan
    t0_free: bool = False
    t0_bracket: tuple[float, float] = (math.nan, math.nan)
    t0_ci: tuple[float, float] = (math.nan, math.nan)
    n_points: int = 0
    window: tuple[float, float] = (math.nan, math.nan)
    chi2: float = math.nan
    aic: float = math.nan
    bic: float = math.nan
    n_params: int = 0
    loss: str = "soft_l1"
    ci_method: str = ""
    n_resamples: int = 0
    outside_ci: tuple[str, ...] = ()

    def __bool__(self) -> bool:
        return self.success
