"""Transfer models by name: fitting one to a channel's measurements, rebuilding one from a profile, and the sRGB curve.

A transfer model maps a single channel's normalised digital level ``x = d / d_max`` (0..1) to its normalised
output ``y``, the fraction of the channel's full-drive radiance above black (0..1). The models themselves live in
:mod:`~stimlab.colorimetry.transfer_parametric` (power, gain-offset-gamma) and
:mod:`~stimlab.colorimetry.transfer_table` (monotone table); the noise model that weights their fits in
:mod:`~stimlab.colorimetry.reading_noise` (:func:`reading_sigma` is importable from here too).

References
----------
- Berns, R. S. (1996). Methods for characterizing CRT displays. Displays, 16(4), 173–182.
- IEC 61966-2-1:1999, Default RGB colour space – sRGB (:func:`sRGB_decode`, used in checks).
"""

from __future__ import annotations

import dataclasses

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .reading_noise import READING_FLOOR_CD_M2, READING_RELATIVE_ERROR, reading_sigma
from .transfer_parametric import GainOffsetGammaTransfer, PowerTransfer, as_finite
from .transfer_table import TableTransfer

__all__ = [
    "TRANSFER_MODELS",
    "TransferFit",
    "fit_transfer",
    "transfer_from_dict",
    "sRGB_decode",
    # The profile builder and the calibration import the noise model from here.
    "reading_sigma",
    "READING_RELATIVE_ERROR",
    "READING_FLOOR_CD_M2",
]

TRANSFER_MODELS = {
    "power": PowerTransfer,
    "gog": GainOffsetGammaTransfer,
    "table": TableTransfer,
}
"""Transfer models by name."""


@dataclasses.dataclass(frozen=True)
class TransferFit:
    """A fitted transfer model with its residuals against the normalised measurements.

    Attributes
    ----------
    transfer
        The fitted transfer model (an instance of a value of :data:`TRANSFER_MODELS`).
    rms
        Root-mean-square residual in normalised output (fraction of full drive), ≥ 0.
    max_abs
        Largest absolute residual in normalised output, ≥ 0.
    """

    transfer: PowerTransfer | GainOffsetGammaTransfer | TableTransfer
    rms: float
    max_abs: float


def fit_transfer(x: ArrayLike, y: ArrayLike, transfer_model: str = "gog", sigma: ArrayLike | None = None) -> TransferFit:
    """Fit one transfer model to normalised measurements.

    Parameters
    ----------
    x
        Normalised digital input ``d / d_max``, increasing, 0..1, including 0 and 1, shape (N,).
    y
        Normalised output, fraction of full-drive radiance above black, shape (N,).
    transfer_model
        A key of :data:`TRANSFER_MODELS`.
    sigma
        Standard error of each ``y`` in the same normalised units (see :func:`reading_sigma`); it weights the
        fitted models. ``None`` assumes 0.3 % of the value plus 1e-4 of full scale.

    Returns
    -------
    TransferFit
        The transfer model with its RMS and largest residual in normalised output (fraction of full drive).

    Raises
    ------
    ValueError
        For an unknown model name (listing the valid ones) or unusable data.

    Examples
    --------
    >>> x = np.linspace(0.0, 1.0, 9)
    >>> fit = fit_transfer(x, x**2.2, "power")
    >>> round(fit.transfer.gamma, 6), fit.rms < 1e-9
    (2.2, True)
    """
    if transfer_model not in TRANSFER_MODELS:
        raise ValueError(f"unknown transfer model {transfer_model!r}; choose one of: {', '.join(TRANSFER_MODELS)}")
    x = as_finite(x, "x")
    y = as_finite(y, "y")
    fitted = TRANSFER_MODELS[transfer_model].fit(x, y, sigma)
    residual = fitted.forward(x) - y
    return TransferFit(fitted, float(np.sqrt(np.mean(residual**2))), float(np.max(np.abs(residual))))


def transfer_from_dict(data: dict) -> PowerTransfer | GainOffsetGammaTransfer | TableTransfer:
    """Rebuild a transfer model from its form in a profile.

    Parameters
    ----------
    data
        ``{"model": name, "parameters": {...}}``: a key of :data:`TRANSFER_MODELS` and the model's
        ``parameters()`` (γ and gain dimensionless; a table's ``x`` and ``y`` normalised, 0..1).

    Returns
    -------
    PowerTransfer or GainOffsetGammaTransfer or TableTransfer
        The model, mapping normalised level (0..1) to normalised output (0..1).

    Raises
    ------
    ValueError
        For an unknown model name (listing the valid ones) or an invalid table.

    Examples
    --------
    >>> transfer_from_dict({"model": "power", "parameters": {"gamma": 2.2}})
    PowerTransfer(gamma=2.2)
    """
    name = data.get("model")
    if name not in TRANSFER_MODELS:
        raise ValueError(f"unknown transfer model {name!r}; choose one of: {', '.join(TRANSFER_MODELS)}")
    parameters = data.get("parameters") or {}
    if name == "table":
        return TableTransfer(tuple(parameters["x"]), tuple(parameters["y"]))
    return TRANSFER_MODELS[name](**parameters)


def sRGB_decode(levels: ArrayLike, bits: int = 8) -> NDArray[np.float64]:
    """The IEC 61966-2-1 sRGB curve: a single channel's digital level to normalised linear output.

    Parameters
    ----------
    levels
        Digital levels of one channel (the transfer curve's domain, not device triplets), 0..2^bits − 1, any shape.
    bits
        Bit depth, ≥ 1 (8 for the standard's 0..255).

    Returns
    -------
    ndarray of float64, shape of ``levels``
        Linear output, 0..1: ``V/12.92`` up to ``V = 0.04045``, ``((V + 0.055)/1.055)^2.4`` above, ``V = d/d_max``.

    References
    ----------
    IEC 61966-2-1:1999, Default RGB colour space – sRGB.

    Examples
    --------
    >>> round(float(sRGB_decode(128)), 6)
    0.215861
    """
    v = np.asarray(levels, dtype=float) / (2**bits - 1)
    return np.where(v <= 0.04045, v / 12.92, ((v + 0.055) / 1.055) ** 2.4)
