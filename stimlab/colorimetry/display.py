"""One display seen by one observer: linear RGB to cone excitations and CIE XYZ, and the transfer curves.

Linear RGB is the fraction of each primary's full-drive radiance above black (0..1). The light of a colour is
``B(λ) + Σ rgb_i·P_i(λ)``, so ``LMS = LMS_black + M_LMS · rgb`` with ``M_LMS``'s columns the cone excitations of
the primaries, and likewise for CIE 1931 XYZ. Luminance (cd/m²) is ``w_L·L + w_M·M`` with the observer's weights
(CIE 170-2:2015), which for the Stockman & Sharpe fundamentals is the CIE 2008 physiologically relevant V(λ).

References
----------
- CIE 170-2:2015, Fundamental chromaticity diagram with physiological axes – Part 2.
- CIE 015:2018, Colorimetry (the CIE 1931 standard observer, K_m = 683 lm/W; from memory).
"""

from __future__ import annotations

from functools import cached_property

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._colour import colour
from .observers import K_M, Observer
from .observers import observer as standard_observer
from .rods import RodResponse, rod_response
from .spaces import as_triplets
from .spectral import integration_grid, smooth_on_grid
from .transfer import transfer_from_dict

__all__ = ["CHANNELS", "DisplayModel", "XYZ_to_LMS_matrix"]

CHANNELS = ("red", "green", "blue")
"""The display's channels, in the order of every RGB triplet."""


def _cmfs_1931(grid) -> np.ndarray:
    cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
    return smooth_on_grid(cmfs.wavelengths, cmfs.values, grid)


def XYZ_to_LMS_matrix(obs: Observer) -> NDArray[np.float64]:
    """Least-squares 3×3 matrix from CIE 1931 XYZ to the observer's cone excitations.

    Fitted over the spectrum so that ``l̄m̄s̄(λ) ≈ T · x̄ȳz̄(λ)``. Only used for profiles given as xyY, where it is
    an approximation (the 1931 observer and the cone fundamentals are not linear transforms of each other).

    Parameters
    ----------
    obs
        The observer whose cone fundamentals are the target.

    Returns
    -------
    ndarray of float64, shape (3, 3)
        ``T`` with ``LMS ≈ T · XYZ``, in the units of the observer's fundamentals.
    """
    xyz = _cmfs_1931(obs.wavelengths)
    solution, *_ = np.linalg.lstsq(xyz, obs.lms, rcond=None)
    return solution.T


class DisplayModel:
    """A display profile bound to an observer.

    Parameters
    ----------
    profile
        A checked profile dict (:func:`stimlab.profiles.profile.load_profile`).
    obs
        The observer, or its key (default ``ss2``).

    Attributes
    ----------
    M_LMS : ndarray (3, 3)
        Columns: L, M, S of each primary at full drive above black.
    LMS_black : ndarray (3,)
        Cone excitations of the all-zero drive.
    M_XYZ, XYZ_black
        The same in CIE 1931 XYZ (Y in cd/m²).
    transfers : tuple
        Fitted transfer model per channel.
    level_outputs : ndarray (3, 2^bits)
        Normalised output of every digital level of every channel.
    spectra : tuple or None
        ``(wavelengths_nm, radiance (N, 4))`` as measured: red, green, blue above black, and black (W·sr⁻¹·m⁻²·nm⁻¹);
        ``None`` for a profile given as xyY.

    Examples
    --------
    A profile given as xyY (sRGB primaries, 100 cd/m² white, a 0.2 cd/m² black; an approximation):

    >>> profile = {"name": "Example", "bits": 8, "sha256": "0" * 64,
    ...            "transfer": {c: {"model": "power", "parameters": {"gamma": 2.2}} for c in CHANNELS},
    ...            "primaries": {"kind": "chromaticities", "red": (0.64, 0.33, 21.26), "green": (0.30, 0.60, 71.52),
    ...                          "blue": (0.15, 0.06, 7.22), "black": (0.3127, 0.3290, 0.2)}}
    >>> model = DisplayModel(profile)
    >>> round(float(model.RGB_linear_to_XYZ([1.0, 1.0, 1.0])[1]), 6), model.level_outputs.shape
    (100.2, (3, 256))
    >>> np.round(model.LMS_to_RGB_linear(model.RGB_linear_to_LMS([0.5, 0.2, 0.1])), 12).tolist()
    [0.5, 0.2, 0.1]
    """

    def __init__(self, profile: dict, obs: Observer | str = "ss2"):
        self.profile = profile
        self.observer = standard_observer(obs) if isinstance(obs, str) else obs
        self.bits = int(profile["bits"])
        self.d_max = 2**self.bits - 1
        self.sha256 = profile["sha256"]
        self.is_approximate = profile["primaries"]["kind"] == "chromaticities"
        self._primaries(profile["primaries"])
        self.transfers = tuple(transfer_from_dict(profile["transfer"][c]) for c in CHANNELS)
        x = np.arange(self.d_max + 1) / self.d_max
        self.level_outputs = np.stack([t.forward(x) for t in self.transfers])
        self.M_LMS_inverse = np.linalg.inv(self.M_LMS)

    def _primaries(self, primaries: dict) -> None:
        obs = self.observer
        if primaries["kind"] == "spectra":
            wavelengths = np.asarray(primaries["wavelength_nm"], dtype=float)
            measured = np.array([primaries[c] for c in CHANNELS + ("black",)]).T
            self.spectra = (wavelengths, measured)
            lms = K_M * self.integrate(obs.wavelengths, obs.lms)
            cmfs = colour.colorimetry.MSDS_CMFS_STANDARD_OBSERVER["CIE 1931 2 Degree Standard Observer"]
            xyz = K_M * self.integrate(cmfs.wavelengths, cmfs.values)
            self.M_LMS, self.LMS_black = lms[:3].T, lms[3]
            self.M_XYZ, self.XYZ_black = xyz[:3].T, xyz[3]
        else:
            self.spectra = None
            xyz = np.array([colour.xyY_to_XYZ(primaries[c]) for c in CHANNELS + ("black",)])
            lms = xyz @ XYZ_to_LMS_matrix(obs).T
            self.M_XYZ, self.XYZ_black = xyz[:3].T, xyz[3]
            self.M_LMS, self.LMS_black = lms[:3].T, lms[3]

    def integrate(self, table_wavelengths: ArrayLike, table_values: ArrayLike) -> NDArray[np.float64]:
        """``Σ spectrum · function · Δλ`` for each measured spectrum against a tabulated spectral function.

        Summed on the measurement's own grid within the table's range
        (:func:`stimlab.colorimetry.spectral.integration_grid`), the table brought to it by
        :func:`stimlab.colorimetry.spectral.smooth_on_grid`.

        Parameters
        ----------
        table_wavelengths
            Evenly spaced wavelengths of the table, nm.
        table_values
            The function, shape (N,) or (N, K).

        Returns
        -------
        ndarray of float64
            Shape (4,) or (4, K): red, green, blue (above black) and black, in radiance units × nm.

        Raises
        ------
        ValueError
            For a profile given as xyY, which has no spectra.
        """
        if self.spectra is None:
            raise ValueError("this profile gives its primaries as xyY, not spectra: spectral integrals are unavailable")
        wavelengths, measured = self.spectra
        grid, step = integration_grid(wavelengths, table_wavelengths)
        return step * measured[np.isin(wavelengths, grid)].T @ smooth_on_grid(table_wavelengths, table_values, grid)

    @cached_property
    def rods(self) -> RodResponse | None:
        """Rod excitation of the primaries and black, computed once per model.

        Returns
        -------
        RodResponse or None
            Rod excitation in scotopic cd/m² (``K′m · ∫ spectrum · V′(λ) dλ``, CIE 1951 scotopic V′(λ) from
            colour-science's datasets) of each primary at full drive above black and of black; ``None`` for a
            profile given as xyY, which has no spectra to integrate (see
            :func:`stimlab.colorimetry.rods.rod_response`).
        """
        return rod_response(self)

    # Linear RGB <-> cone excitations and CIE XYZ ------------------------------------------------------------
    def RGB_linear_to_LMS(self, RGB: ArrayLike) -> NDArray[np.float64]:
        """Cone excitations of linear RGB, ``LMS_black + M_LMS · rgb``.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3), 0..1 in gamut (values outside are extrapolated linearly).

        Returns
        -------
        ndarray of float64, shape (..., 3)
            L, M, S, scaled so that ``w_L·L + w_M·M`` is luminance in cd/m².

        Raises
        ------
        ValueError
            If the shape is not (..., 3) or a value is NaN or infinite (likewise for the conversions below).
        """
        return as_triplets(RGB, "RGB") @ self.M_LMS.T + self.LMS_black

    def LMS_to_RGB_linear(self, LMS: ArrayLike) -> NDArray[np.float64]:
        """Linear RGB that produces the cone excitations ``LMS``, ``M_LMS⁻¹ · (LMS − LMS_black)``.

        Parameters
        ----------
        LMS
            Cone excitations, shape (..., 3), scaled so that ``w_L·L + w_M·M`` is luminance in cd/m²; any finite
            values.

        Returns
        -------
        ndarray of float64, shape (..., 3)
            Linear RGB, fraction of each primary's full drive above black: 0..1 in gamut, and possibly outside
            0..1 (out of gamut); nothing is clipped.

        Raises
        ------
        ValueError
            If the shape is not (..., 3) or a value is NaN or infinite.
        """
        return (as_triplets(LMS, "LMS") - self.LMS_black) @ self.M_LMS_inverse.T

    def RGB_linear_to_XYZ(self, RGB: ArrayLike) -> NDArray[np.float64]:
        """CIE 1931 XYZ of linear RGB, ``XYZ_black + M_XYZ · rgb``.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3), 0..1 in gamut (values outside are extrapolated linearly).

        Returns
        -------
        ndarray of float64, shape (..., 3)
            CIE 1931 2° XYZ (CIE 015:2018, from memory), Y in cd/m² (≥ 0 in gamut).

        Raises
        ------
        ValueError
            If the shape is not (..., 3) or a value is NaN or infinite.
        """
        return as_triplets(RGB, "RGB") @ self.M_XYZ.T + self.XYZ_black

    def RGB_linear_to_luminance(self, RGB: ArrayLike) -> NDArray[np.float64]:
        """Luminance of linear RGB under the observer's V(λ), ``w_L·L + w_M·M``.

        For the Stockman & Sharpe observers this is the CIE 2008 V(λ) (CIE 170-2:2015), so it differs slightly
        from the CIE 1931 Y of :meth:`RGB_linear_to_XYZ`.

        Parameters
        ----------
        RGB
            Linear RGB, shape (..., 3), 0..1 in gamut (values outside are extrapolated linearly).

        Returns
        -------
        ndarray of float64, shape (...)
            Luminance, cd/m² (≥ 0 in gamut).

        Raises
        ------
        ValueError
            If the shape is not (..., 3) or a value is NaN or infinite.
        """
        LMS = self.RGB_linear_to_LMS(RGB)
        return self.observer.w_L * LMS[..., 0] + self.observer.w_M * LMS[..., 1]

    @property
    def white_luminance(self) -> float:
        """Luminance of full drive on all channels (linear RGB (1, 1, 1)), under the observer's V(λ).

        Returns
        -------
        float
            Luminance, cd/m², > 0 for a usable display.
        """
        return float(self.RGB_linear_to_luminance(np.ones(3)))

    @property
    def black_luminance(self) -> float:
        """Luminance of all-zero drive (linear RGB (0, 0, 0)): the display's black, under the observer's V(λ).

        Returns
        -------
        float
            Luminance, cd/m², ≥ 0.
        """
        return float(self.RGB_linear_to_luminance(np.zeros(3)))

    def primaries_xy(self) -> NDArray[np.float64]:
        """CIE 1931 xy chromaticity of each primary at full drive above black.

        Returns
        -------
        ndarray of float64, shape (3, 2)
            Rows red, green, blue; columns x, y, each 0..1 (CIE 015:2018, from memory).
        """
        return np.array([colour.XYZ_to_xy(self.M_XYZ[:, i]) for i in range(3)])

