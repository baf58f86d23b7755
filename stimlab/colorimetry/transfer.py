"""Transfer functions of one display channel: normalised digital input to normalised light output.

Input ``x = d / d_max`` for digital level ``d``; output ``y`` is the fraction of the channel's full-drive
radiance above black, so ``y(0) = 0`` and ``y(1) = 1`` for every model fitted to measurements.

Notes
-----
============  ==============  =========
Quantity      Domain          Range
============  ==============  =========
``x``         [0, 1]          —
``y``         —               [0, 1]
============  ==============  =========

References
----------
- Berns, R. S., Motta, R. J., & Gorzynski, M. E. (1993). CRT colorimetry. Part I: Theory and practice.
  Color Research & Application, 18(5), 299–314 (the gain-offset-gamma model).
- Berns, R. S. (1996). Methods for characterizing CRT displays. Displays, 16(4), 173–182.
- IEC 61966-2-1:1999, the sRGB transfer curve (:func:`sRGB_decode`, used in checks).
"""

from __future__ import annotations

import dataclasses

import numpy as np
from scipy.interpolate import PchipInterpolator
from scipy.optimize import least_squares

__all__ = [
    "PowerTransfer",
    "GainOffsetGammaTransfer",
    "TableTransfer",
    "TRANSFER_MODELS",
    "TransferFit",
    "fit_transfer",
    "transfer_from_dict",
    "sRGB_decode",
]


def _as_unit(values, name: str) -> np.ndarray:
    values = np.asarray(values, dtype=float)
    if not np.all(np.isfinite(values)):
        raise ValueError(f"{name} must be finite numbers; got NaN or infinity")
    return values


@dataclasses.dataclass(frozen=True)
class PowerTransfer:
    """``y = x^γ``.

    Examples
    --------
    >>> PowerTransfer(2.0).forward(0.5)
    0.25
    """

    gamma: float
    name = "power"

    def forward(self, x):
        return np.power(np.clip(_as_unit(x, "x"), 0.0, None), self.gamma)

    def inverse(self, y):
        return np.power(np.clip(_as_unit(y, "y"), 0.0, None), 1.0 / self.gamma)

    def parameters(self) -> dict:
        return {"gamma": self.gamma}

    @classmethod
    def fit(cls, x, y) -> "PowerTransfer":
        keep = (x > 0) & (y > 0) & (x < 1)
        if keep.sum() < 1:
            raise ValueError("the power model needs at least one level strictly between 0 and full drive")
        result = least_squares(lambda p: np.power(x, p[0]) - y, x0=[2.2], bounds=([0.1], [10.0]))
        return cls(gamma=float(result.x[0]))


@dataclasses.dataclass(frozen=True)
class GainOffsetGammaTransfer:
    """Gain-offset-gamma: ``y = max(gain·x + offset, 0)^γ`` with ``gain + offset = 1`` so that ``y(1) = 1``.

    Examples
    --------
    >>> model = GainOffsetGammaTransfer(gain=1.1, offset=-0.1, gamma=2.0)
    >>> float(model.forward(1.0)), round(float(model.inverse(model.forward(0.5))), 12)
    (1.0, 0.5)
    """

    gain: float
    offset: float
    gamma: float
    name = "gog"

    def forward(self, x):
        base = self.gain * np.clip(_as_unit(x, "x"), 0.0, None) + self.offset
        return np.power(np.clip(base, 0.0, None), self.gamma)

    def inverse(self, y):
        base = np.power(np.clip(_as_unit(y, "y"), 0.0, None), 1.0 / self.gamma)
        # Where the model is cut off at zero (x below -offset/gain) every x gives y = 0; take the largest.
        return np.clip((base - self.offset) / self.gain, 0.0, None)

    def parameters(self) -> dict:
        return {"gain": self.gain, "offset": self.offset, "gamma": self.gamma}

    @classmethod
    def fit(cls, x, y) -> "GainOffsetGammaTransfer":
        if len(x) < 3:
            raise ValueError("the gain-offset-gamma model needs at least three measured levels")

        def residual(p):
            gain, gamma = p
            return np.power(np.clip(gain * x + (1.0 - gain), 0.0, None), gamma) - y

        result = least_squares(residual, x0=[1.0, 2.2], bounds=([0.5, 0.1], [2.0, 10.0]))
        gain, gamma = (float(v) for v in result.x)
        return cls(gain=gain, offset=1.0 - gain, gamma=gamma)


@dataclasses.dataclass(frozen=True)
class TableTransfer:
    """Monotone curve through measured points ``(x_i, y_i)``: piecewise-cubic Hermite (Fritsch–Carlson, PCHIP).

    It passes through every measured point and never reverses direction between them. Piecewise-linear
    interpolation would be simpler but bends too late near black: through the sRGB curve sampled at 18 levels it
    misses by over one digital level, the cubic by under 0.3 (``tests/test_transfer.py``).

    Examples
    --------
    >>> model = TableTransfer((0.0, 0.5, 1.0), (0.0, 0.2, 1.0))
    >>> float(model.forward(0.5)), round(float(model.inverse(0.2)), 6)
    (0.2, 0.5)
    """

    x: tuple
    y: tuple
    name = "table"

    def __post_init__(self):
        x, y = np.asarray(self.x, float), np.asarray(self.y, float)
        if x.shape != y.shape or x.size < 2:
            raise ValueError("a table transfer needs at least two (level, output) points of equal count")
        if np.any(np.diff(x) <= 0):
            raise ValueError("table levels must increase strictly")
        bad = np.flatnonzero(np.diff(y) < 0)
        if bad.size:
            raise ValueError(f"table output decreases after point {int(bad[0]) + 1}; "
                             "a transfer curve must be monotone")
        curve = PchipInterpolator(x, y, extrapolate=False)
        dense_x = np.linspace(x[0], x[-1], 65537)
        object.__setattr__(self, "_curve", curve)
        object.__setattr__(self, "_dense", (dense_x, curve(dense_x)))

    def forward(self, x):
        x = np.clip(_as_unit(x, "x"), self.x[0], self.x[-1])
        return self._curve(x)[()]

    def inverse(self, y):
        # Flat stretches are ambiguous; np.interp on a non-decreasing table returns a level inside them.
        dense_x, dense_y = self._dense
        return np.interp(_as_unit(y, "y"), dense_y, dense_x)

    def parameters(self) -> dict:
        return {"x": list(self.x), "y": list(self.y)}

    @classmethod
    def fit(cls, x, y) -> "TableTransfer":
        return cls(tuple(float(v) for v in x), tuple(float(v) for v in y))


TRANSFER_MODELS = {
    "power": PowerTransfer,
    "gog": GainOffsetGammaTransfer,
    "table": TableTransfer,
}
"""Transfer models by name."""


@dataclasses.dataclass(frozen=True)
class TransferFit:
    """A fitted model with its residuals against the normalised measurements.

    Attributes
    ----------
    model
        The fitted model.
    rms
        Root-mean-square residual in normalised output (0..1).
    max_abs
        Largest absolute residual in normalised output.
    """

    model: object
    rms: float
    max_abs: float


def fit_transfer(x, y, model: str = "gog") -> TransferFit:
    """Fit one transfer model to normalised measurements.

    Parameters
    ----------
    x
        Normalised digital input ``d / d_max``, increasing, including 0 and 1.
    y
        Normalised output, fraction of full-drive radiance above black.
    model
        A key of :data:`TRANSFER_MODELS`.

    Raises
    ------
    ValueError
        For an unknown model name (listing the valid ones) or unusable data.
    """
    if model not in TRANSFER_MODELS:
        raise ValueError(f"unknown transfer model {model!r}; choose one of: {', '.join(TRANSFER_MODELS)}")
    x = _as_unit(x, "x")
    y = _as_unit(y, "y")
    fitted = TRANSFER_MODELS[model].fit(x, y)
    residual = fitted.forward(x) - y
    return TransferFit(fitted, float(np.sqrt(np.mean(residual**2))), float(np.max(np.abs(residual))))


def transfer_from_dict(data: dict):
    """Rebuild a model from ``{"model": name, "parameters": {...}}`` as saved in a profile."""
    name = data.get("model")
    if name not in TRANSFER_MODELS:
        raise ValueError(f"unknown transfer model {name!r}; choose one of: {', '.join(TRANSFER_MODELS)}")
    parameters = data.get("parameters") or {}
    if name == "table":
        return TableTransfer(tuple(parameters["x"]), tuple(parameters["y"]))
    return TRANSFER_MODELS[name](**parameters)


def sRGB_decode(levels, bits: int = 8):
    """The IEC 61966-2-1 sRGB curve: digital level to normalised linear output.

    Examples
    --------
    >>> round(float(sRGB_decode(128)), 6)
    0.215861
    """
    v = np.asarray(levels, dtype=float) / (2**bits - 1)
    return np.where(v <= 0.04045, v / 12.92, ((v + 0.055) / 1.055) ** 2.4)
