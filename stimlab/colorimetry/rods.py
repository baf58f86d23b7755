"""Rod excitation of what a display shows: scotopic luminance and rod contrast, linear in linear RGB like the cones.

Rods are excited in proportion to the CIE 1951 scotopic luminous efficiency V′(λ). Scotopic luminance in scotopic
cd/m² is ``K′m · ∫ spectrum · V′(λ) dλ`` with K′m = 1700 lm/W. As for the cones, the light of a colour is
``B(λ) + Σ rgb_i · P_i(λ)``, so ``R = R_black + m_rod · rgb`` and rod contrast against a background is
``(R − R_0) / R_0``.

A display with three primaries sets three cone excitations; the rods' excitation is then fixed by the spectra. It
cannot be silenced at the same time, so this module reports rod contrast and never claims rod silence.

References
----------
- CIE 1951 scotopic standard observer V′(λ): colour-science's
  ``SDS_LEFS_SCOTOPIC['CIE 1951 Scotopic Standard Observer']``; K′m: ``colour.constants.CONSTANT_KP_M``.
- CIE 191:2010, Recommended system for mesopic photometry based on visual performance: the mesopic range reaches
  up to about 5 cd/m² photopic luminance (from memory).
"""

from __future__ import annotations

import dataclasses
from typing import Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._colour import colour
from .spaces import as_triplets

__all__ = ["RodResponse", "rod_response", "K_PRIME_M", "SCOTOPIC_OBSERVER", "MESOPIC_UPPER_CD_M2",
           "DEFAULT_MAX_ROD_CONTRAST", "NOT_AVAILABLE", "is_mesopic", "scotopic_efficiency"]

SCOTOPIC_OBSERVER = "CIE 1951 Scotopic Standard Observer"
"""The colour-science dataset key of V′(λ)."""

K_PRIME_M = float(colour.constants.CONSTANT_KP_M)
"""Maximum scotopic luminous efficacy, lm/W (1700)."""

MESOPIC_UPPER_CD_M2 = 5.0
"""Upper limit of the mesopic range in photopic luminance, cd/m² (CIE 191:2010, from memory)."""

DEFAULT_MAX_ROD_CONTRAST = 0.01
"""Rod contrast above which the audit warns for isoluminant or cone-isolating stimuli on a mesopic background:
1 %, a default to adjust per protocol (``rods.max_rod_contrast``), not a standard."""

NOT_AVAILABLE = ("rod contrast not available: the profile gives the primaries as xyY, not spectra, and rod "
                 "excitation needs the spectra (it is not guessed)")


def scotopic_efficiency() -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """The CIE 1951 scotopic luminous efficiency V′(λ), as colour-science tabulates it.

    Returns
    -------
    wavelengths : ndarray of float64, shape (N,)
        nm, 380–780 nm in 1 nm steps.
    values : ndarray of float64, shape (N,)
        V′(λ), 0..1, peak 1 at 507 nm (the CIE's peak; colour-science's table also reads 1 at 506 nm).

    References
    ----------
    CIE 1951 scotopic standard observer; colour-science ``SDS_LEFS_SCOTOPIC``.

    Examples
    --------
    >>> wavelengths, values = scotopic_efficiency()
    >>> float(wavelengths[0]), float(wavelengths[-1]), float(values[wavelengths == 507.0][0])
    (380.0, 780.0, 1.0)
    """
    sd = colour.colorimetry.SDS_LEFS_SCOTOPIC[SCOTOPIC_OBSERVER]
    return np.asarray(sd.wavelengths, dtype=float), np.asarray(sd.values, dtype=float)


def is_mesopic(photopic_luminance: ArrayLike) -> NDArray[np.bool_]:
    """Whether a photopic luminance lies below the upper mesopic limit, 5 cd/m² (CIE 191:2010).

    Parameters
    ----------
    photopic_luminance
        Photopic luminance, cd/m², any shape.

    Returns
    -------
    ndarray of bool, same shape
        True below :data:`MESOPIC_UPPER_CD_M2`, where rods can add to what is seen. The lower mesopic limit
        (about 0.005 cd/m², from memory) is not tested: below it rods still contribute.

    References
    ----------
    CIE 191:2010, Recommended system for mesopic photometry based on visual performance (the limit from memory).

    Examples
    --------
    >>> bool(is_mesopic(2.0)), bool(is_mesopic(30.0))
    (True, False)
    """
    return np.asarray(photopic_luminance, dtype=float) < MESOPIC_UPPER_CD_M2


@dataclasses.dataclass(frozen=True)
class RodResponse:
    """Rod excitation of a display, in scotopic cd/m².

    Attributes
    ----------
    m_rod : ndarray (3,)
        Scotopic luminance of each primary at full drive above black, scotopic cd/m².
    black : float
        Scotopic luminance of the all-zero drive, scotopic cd/m².
    """

    m_rod: NDArray[np.float64]
    black: float

    def scotopic_luminance(self, RGB: ArrayLike) -> NDArray[np.float64]:
        """Scotopic luminance of linear RGB, ``black + m_rod · rgb``.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3), 0..1 in gamut (values outside are extrapolated linearly).

        Returns
        -------
        ndarray of float64, shape (...)
            Scotopic cd/m².

        Raises
        ------
        ValueError
            If the shape is not (..., 3) or a value is NaN or infinite.

        Examples
        --------
        >>> RodResponse(m_rod=np.array([2.0, 30.0, 12.0]), black=0.5).scotopic_luminance([0.5, 0.5, 0.5]).item()
        22.5
        """
        return as_triplets(RGB, "RGB") @ self.m_rod + self.black

    def rod_contrast(self, RGB: ArrayLike, RGB_0: ArrayLike) -> NDArray[np.float64]:
        """Rod contrast ``(R − R_0) / R_0`` of linear RGB against the background ``RGB_0``.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3).
        RGB_0
            Background linear RGB, shape (3,), with a positive scotopic luminance.

        Returns
        -------
        ndarray of float64, shape (...)
            Rod contrast, dimensionless, above −1; 0 at the background.

        Raises
        ------
        ValueError
            If the background's scotopic luminance is not positive, or a shape or value is bad.

        Examples
        --------
        >>> rods = RodResponse(m_rod=np.array([2.0, 30.0, 12.0]), black=0.5)
        >>> round(float(rods.rod_contrast([0.5, 0.6, 0.5], [0.5, 0.5, 0.5])), 6)  # 3 / 22.5
        0.133333
        """
        R_0 = float(self.scotopic_luminance(RGB_0))
        if not R_0 > 0:
            raise ValueError("rod contrast is undefined on a background with zero scotopic luminance")
        return self.scotopic_luminance(RGB) / R_0 - 1.0

    def contrast_of_change(self, delta_RGB: ArrayLike, RGB_0: ArrayLike) -> NDArray[np.float64]:
        """Rod contrast of a change ``delta_RGB`` from the background ``RGB_0``, ``(m_rod · ΔRGB) / R_0``.

        Parameters
        ----------
        delta_RGB
            Change of linear RGB from the background, shape (..., 3).
        RGB_0
            Background linear RGB, shape (3,), with a positive scotopic luminance.

        Returns
        -------
        ndarray of float64, shape (...)
            Rod contrast, dimensionless; the same as :meth:`rod_contrast` of ``RGB_0 + delta_RGB``.
        """
        return (as_triplets(delta_RGB, "ΔRGB") @ self.m_rod) / float(self.scotopic_luminance(RGB_0))


class _SpectralDisplay(Protocol):
    """What :func:`rod_response` needs of a display model (display.py imports this module, so not the class)."""

    spectra: tuple[NDArray[np.float64], NDArray[np.float64]] | None

    def integrate(self, table_wavelengths: ArrayLike, table_values: ArrayLike) -> NDArray[np.float64]: ...


def rod_response(model: _SpectralDisplay) -> RodResponse | None:
    """The rod excitation of a display model's primaries and black, or ``None`` for a profile given as xyY.

    Parameters
    ----------
    model
        A :class:`stimlab.colorimetry.display.DisplayModel`.

    Returns
    -------
    RodResponse or None
        Scotopic cd/m² of each primary at full drive above black and of black, ``K′m · ∫ radiance · V′(λ) dλ``
        with K′m = 1700 lm/W; ``None`` when the profile has no spectra (rod excitation is never guessed).

    Notes
    -----
    Integrated like the cones (:meth:`stimlab.colorimetry.display.DisplayModel.integrate`): on the
    measurement's own grid, with V′(λ) brought to it.

    References
    ----------
    CIE 1951 scotopic standard observer V′(λ) and K′m (colour-science's tables and constants).
    """
    if model.spectra is None:
        return None
    wavelengths, values = scotopic_efficiency()
    integrals = K_PRIME_M * model.integrate(wavelengths, values)
    return RodResponse(m_rod=integrals[:3], black=float(integrals[3]))
