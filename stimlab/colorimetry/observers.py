"""Standard observers: cone fundamentals with their luminance weights and MacLeod–Boynton scaling.

Every table comes from colour-science's datasets; nothing is retyped. Cone excitations in stimlab are scaled so
that ``w_L·L + w_M·M`` is the luminance in cd/m² (``683 · ∫ radiance · V(λ) dλ``), which makes the
MacLeod–Boynton luminance coordinate a photometric luminance.

References
----------
- CIE 170-2:2015, Fundamental chromaticity diagram with physiological axes, part 2 (luminance weights for the
  Stockman & Sharpe fundamentals and the MacLeod–Boynton scaling).
- Stockman, A., & Sharpe, L. T. (2000). The spectral sensitivities of the middle- and long-wavelength-sensitive
  cones derived from measurements in observers of known genotype. Vision Research, 40, 1711–1737.
- Smith, V. C., & Pokorny, J. (1975). Spectral sensitivity of the foveal cone photopigments between 400 and
  500 nm. Vision Research, 15, 161–171.
- MacLeod, D. I. A., & Boynton, R. M. (1979). Chromaticity diagram showing cone excitation by stimuli of equal
  luminance. JOSA, 69, 1183–1186.
"""

from __future__ import annotations

import dataclasses
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._colour import colour

__all__ = ["Observer", "OBSERVERS", "observer", "spectral_LMS_to_luminous_efficiency"]

K_M = 683.0
"""Maximum luminous efficacy of photopic vision, lm/W: the SI defines the candela through K_cd = 683 lm/W at
540 × 10¹² Hz (BIPM SI Brochure, 9th ed., 2019; colour-science's ``CONSTANT_K_M``). Luminance in cd/m² is
``K_M · ∫ radiance · V(λ) dλ``."""


@dataclasses.dataclass(frozen=True)
class Observer:
    """An observer: cone fundamentals on a wavelength grid plus the weights that make luminance from them.

    Attributes
    ----------
    key
        Short name used in files and on the command line (``ss2``, ``ss10``, ``sp``).
    name
        Human-readable name with its source.
    wavelengths
        Wavelength grid, nm, shape (N,).
    lms
        Cone fundamentals L, M, S in energy units, each peaking at 1, shape (N, 3).
    w_L, w_M
        Luminance weights: ``V(λ) = w_L·l̄(λ) + w_M·m̄(λ)``.
    k_S
        MacLeod–Boynton S scaling: ``s = k_S·S / V``, chosen so that s peaks at 1 over the spectrum.
    adjustment
        ``None`` for the standard observer, or a description of an individual adjustment of ``w_L, w_M``.

    Examples
    --------
    >>> obs = observer("ss10")
    >>> obs.wavelengths.shape, obs.lms.shape, obs.adjustment
    ((441,), (441, 3), None)
    """

    key: str
    name: str
    wavelengths: NDArray[np.float64]
    lms: NDArray[np.float64]
    w_L: float
    w_M: float
    k_S: float
    adjustment: str | None = None

    @property
    def interval(self) -> float:
        """Wavelength spacing of the observer's grid.

        Returns
        -------
        float
            Spacing, nm, > 0: 1 for the Stockman & Sharpe tables (CIE 170-2:2015 through colour-science's
            datasets), 5 for Smith & Pokorny.

        Examples
        --------
        >>> observer("ss2").interval, observer("sp").interval
        (1.0, 5.0)
        """
        return float(self.wavelengths[1] - self.wavelengths[0])

    @property
    def luminous_efficiency(self) -> NDArray[np.float64]:
        """Luminous efficiency ``V(λ) = w_L·l̄ + w_M·m̄`` on the observer's grid.

        For ``ss2`` and ``ss10`` this is the CIE 2008 2° or 10° physiologically relevant luminous efficiency
        function (CIE 170-2:2015); for ``sp`` a least-squares fit to the Judd–Vos V(λ).

        Returns
        -------
        ndarray of float64, shape (N,)
            Dimensionless, 0..1 (about: the weighted sum peaks near 1 at 555 nm), at :attr:`wavelengths`.

        Examples
        --------
        >>> obs = observer("ss2")
        >>> round(float(obs.luminous_efficiency[obs.wavelengths == 555.0][0]), 5)
        0.99946
        """
        return spectral_LMS_to_luminous_efficiency(self.lms, self.w_L, self.w_M)

    def spectra_to_LMS(self, radiance: ArrayLike) -> NDArray[np.float64]:
        """Cone excitations of spectral radiance sampled on this observer's grid.

        Parameters
        ----------
        radiance
            Spectral radiance, W·sr⁻¹·m⁻²·nm⁻¹, ≥ 0, shape (..., N), sampled at :attr:`wavelengths`.

        Returns
        -------
        ndarray of float64, shape (..., 3)
            L, M, S, scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².

        Notes
        -----
        ``LMS = K_M · Δλ · Σ radiance(λ)·lms(λ)``, a rectangle-rule integral with Δλ = :attr:`interval` and
        K_M = 683 lm/W.

        References
        ----------
        - CIE 170-2:2015, Fundamental chromaticity diagram with physiological axes, part 2.
        - BIPM (2019). The International System of Units (SI), 9th ed. (K_cd = 683 lm/W).

        Examples
        --------
        >>> obs = observer("ss2")
        >>> radiance = np.where(obs.wavelengths == 555.0, 0.01, 0.0)  # 0.01 W·sr⁻¹·m⁻² in the 555 nm band
        >>> L, M, S = obs.spectra_to_LMS(radiance)
        >>> round(float(obs.w_L * L + obs.w_M * M), 4)  # 683 × 0.01 × V(555 nm) cd/m²
        6.8263
        """
        return K_M * self.interval * np.asarray(radiance, dtype=float) @ self.lms

    def with_luminance_weights(self, w_L: float, w_M: float, description: str) -> "Observer":
        """This observer with individual luminance weights (e.g. from flicker photometry).

        Parameters
        ----------
        w_L, w_M
            Luminance weights of the L and M fundamentals, finite and > 0 (the standard 2° values are 0.690
            and 0.348).
        description
            How the weights were obtained, kept in :attr:`adjustment` (e.g. "flicker photometry, participant
            P01").

        Returns
        -------
        Observer
            A copy with the new weights and ``k_S`` recomputed so that the MacLeod–Boynton s coordinate still
            peaks at 1 over the spectrum; the fundamentals are shared, not copied.

        Raises
        ------
        ValueError
            If either weight is not a finite positive number.

        References
        ----------
        - MacLeod, D. I. A., & Boynton, R. M. (1979). Chromaticity diagram showing cone excitation by stimuli of
          equal luminance. JOSA, 69, 1183–1186.
        - CIE 170-2:2015 (the s scaling).

        Examples
        --------
        >>> adjusted = observer("ss2").with_luminance_weights(0.72, 0.31, "flicker photometry, participant P01")
        >>> round(adjusted.k_S, 7), adjusted.adjustment
        (0.0366992, 'flicker photometry, participant P01')
        """
        for label, value in (("w_L", w_L), ("w_M", w_M)):
            if not np.isfinite(value) or value <= 0:
                raise ValueError(f"{label} must be a finite positive number, got {value!r}")
        return dataclasses.replace(self, w_L=float(w_L), w_M=float(w_M),
                                   k_S=_k_S(self.lms, w_L, w_M), adjustment=description)


def spectral_LMS_to_luminous_efficiency(lms: ArrayLike, w_L: float, w_M: float) -> NDArray[np.float64]:
    """Luminous efficiency from cone fundamentals, ``V = w_L·L + w_M·M``.

    Parameters
    ----------
    lms
        Cone fundamentals l̄, m̄, s̄ (energy units, each peaking at 1), shape (..., 3).
    w_L, w_M
        Luminance weights, > 0.

    Returns
    -------
    ndarray of float64, shape (...,)
        V, about 0..1 for standard weights (peak 1 at about 555 nm). S cones add nothing.

    References
    ----------
    CIE 170-2:2015: ``V(λ) = 0.68990272·l̄(λ) + 0.34832189·m̄(λ)`` (2°) and ``0.69283932·l̄ + 0.34967567·m̄`` (10°)
    for the Stockman & Sharpe (2000) fundamentals.

    Examples
    --------
    >>> float(spectral_LMS_to_luminous_efficiency(np.array([1.0, 1.0, 0.0]), 0.68990272, 0.34832189))
    1.03822461
    """
    lms = np.asarray(lms, dtype=float)
    return w_L * lms[..., 0] + w_M * lms[..., 1]


def _k_S(lms: np.ndarray, w_L: float, w_M: float) -> float:
    V = spectral_LMS_to_luminous_efficiency(lms, w_L, w_M)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(V > 0, lms[:, 2] / V, 0.0)
    return float(1.0 / np.max(ratio))


def _table(name: str) -> tuple[np.ndarray, np.ndarray]:
    msds = colour.colorimetry.MSDS_CMFS_LMS[name]
    return np.asarray(msds.wavelengths, dtype=float), np.asarray(msds.values, dtype=float)


def _smith_pokorny_weights() -> tuple[float, float]:
    """Least-squares weights making ``w_L·L + w_M·M`` the Judd–Vos V(λ) on colour-science's SP table.

    Smith & Pokorny define their fundamentals so that L + M is the Judd–Vos luminous efficiency; colour-science
    stores them peak-normalised, so the weights are recovered here rather than typed in.
    """
    wavelengths, lms = _table("Smith & Pokorny 1975 Normal Trichromats")
    judd_vos = colour.colorimetry.SDS_LEFS_PHOTOPIC["Judd-Vos Modified CIE 1978 Photopic Standard Observer"]
    V = np.interp(wavelengths, judd_vos.wavelengths, judd_vos.values)
    weights, *_ = np.linalg.lstsq(lms[:, :2], V, rcond=None)
    return float(weights[0]), float(weights[1])


# CIE 170-2:2015 luminance weights for the Stockman & Sharpe fundamentals.
_WEIGHTS_CIE_170_2 = {
    "ss2": (0.68990272, 0.34832189),
    "ss10": (0.69283932, 0.34967567),
}

_SOURCES = {
    "ss2": ("Stockman & Sharpe 2 Degree Cone Fundamentals", "Stockman & Sharpe (2000) 2°, CIE 170-2:2015"),
    "ss10": ("Stockman & Sharpe 10 Degree Cone Fundamentals", "Stockman & Sharpe (2000) 10°, CIE 170-2:2015"),
    "sp": ("Smith & Pokorny 1975 Normal Trichromats", "Smith & Pokorny (1975) 2°, Judd–Vos luminance"),
}


@lru_cache(maxsize=None)
def observer(key: str = "ss2") -> Observer:
    """The standard observer called ``key``.

    Parameters
    ----------
    key
        One of :data:`OBSERVERS`: ``ss2`` (default; Stockman & Sharpe 2°, 390..830 nm at 1 nm), ``ss10``
        (Stockman & Sharpe 10°, 390..830 nm at 1 nm), ``sp`` (Smith & Pokorny 2°, 380..780 nm at 5 nm).

    Returns
    -------
    Observer
        Cone fundamentals with their luminance weights and MacLeod–Boynton ``k_S``. The result is cached and
        its tables are read-only, so every caller shares one copy.

    Raises
    ------
    ValueError
        For an unknown key, listing the valid ones.

    Notes
    -----
    The weights of ``ss2`` and ``ss10`` are those of CIE 170-2:2015; those of ``sp`` are fitted so that
    ``w_L·l̄ + w_M·m̄`` is the Judd–Vos V(λ), as Smith & Pokorny define their fundamentals. ``k_S`` is
    ``1 / max(s̄/V)`` over the spectrum, so that the MacLeod–Boynton s coordinate peaks at 1.

    References
    ----------
    - CIE 170-2:2015, Fundamental chromaticity diagram with physiological axes, part 2.
    - Stockman, A., & Sharpe, L. T. (2000). Vision Research, 40, 1711–1737.
    - Smith, V. C., & Pokorny, J. (1975). Vision Research, 15, 161–171.
    - MacLeod, D. I. A., & Boynton, R. M. (1979). JOSA, 69, 1183–1186.

    Examples
    --------
    >>> round(observer("ss2").k_S, 7)
    0.0371598
    >>> observer("ss2").w_L, observer("ss2").w_M
    (0.68990272, 0.34832189)
    """
    if key not in _SOURCES:
        raise ValueError(f"unknown observer {key!r}; choose one of: {', '.join(OBSERVERS)}")
    table, name = _SOURCES[key]
    wavelengths, lms = _table(table)
    w_L, w_M = _WEIGHTS_CIE_170_2[key] if key in _WEIGHTS_CIE_170_2 else _smith_pokorny_weights()
    wavelengths.setflags(write=False)
    lms.setflags(write=False)
    return Observer(key=key, name=name, wavelengths=wavelengths, lms=lms, w_L=w_L, w_M=w_M,
                    k_S=_k_S(lms, w_L, w_M))


OBSERVERS = tuple(_SOURCES)
"""Keys of the standard observers."""
