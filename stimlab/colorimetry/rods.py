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

import numpy as np

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


def scotopic_efficiency() -> tuple[np.ndarray, np.ndarray]:
    """V′(λ): wavelengths (nm) and values (peak 1), as colour-science tabulates the CIE 1951 scotopic observer."""
    sd = colour.colorimetry.SDS_LEFS_SCOTOPIC[SCOTOPIC_OBSERVER]
    return np.asarray(sd.wavelengths, dtype=float), np.asarray(sd.values, dtype=float)


def is_mesopic(photopic_luminance) -> np.ndarray:
    """Whether a photopic luminance (cd/m²) lies below the upper mesopic limit, 5 cd/m² (CIE 191:2010).

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

    m_rod: np.ndarray
    black: float

    def scotopic_luminance(self, RGB) -> np.ndarray:
        """Scotopic luminance (scotopic cd/m²) of linear RGB, shape (..., 3) → (...)."""
        return as_triplets(RGB, "RGB") @ self.m_rod + self.black

    def rod_contrast(self, RGB, RGB_0) -> np.ndarray:
        """Rod contrast ``(R − R_0) / R_0`` of linear RGB against the background ``RGB_0``.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3).
        RGB_0
            Background linear RGB, shape (3,), with a positive scotopic luminance.

        Returns
        -------
        ndarray
            Shape (...), dimensionless.
        """
        R_0 = float(self.scotopic_luminance(RGB_0))
        if not R_0 > 0:
            raise ValueError("rod contrast is undefined on a background with zero scotopic luminance")
        return self.scotopic_luminance(RGB) / R_0 - 1.0

    def contrast_of_change(self, delta_RGB, RGB_0) -> np.ndarray:
        """Rod contrast of a change ``delta_RGB`` (shape (..., 3)) from the background ``RGB_0``."""
        return (as_triplets(delta_RGB, "ΔRGB") @ self.m_rod) / float(self.scotopic_luminance(RGB_0))


def rod_response(model) -> RodResponse | None:
    """The rod excitation of a display model's primaries and black, or ``None`` for a profile given as xyY.

    Integrated like the cones (:meth:`stimlab.display.DisplayModel.integrate`): on the measurement's own grid,
    with V′(λ) brought to it.

    Parameters
    ----------
    model
        A :class:`stimlab.display.DisplayModel`.
    """
    if model.spectra is None:
        return None
    wavelengths, values = scotopic_efficiency()
    integrals = K_PRIME_M * model.integrate(wavelengths, values)
    return RodResponse(m_rod=integrals[:3], black=float(integrals[3]))
