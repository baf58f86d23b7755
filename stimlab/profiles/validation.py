"""A display profile checked completely before anything stores or uses it.

Three stages, each naming the JSON path of the first problem: the JSON Schema (``stimlab/data/profile.schema.json``:
shape, types and bounds), strict JSON values (finite numbers, see :mod:`stimlab.jsonio`), and the physics a schema
cannot express: the primaries must span colour space (their matrix to cone excitations invertible and well
conditioned), wavelengths must rise, and the display model built from the profile must give finite numbers.
"""

from __future__ import annotations

import json

import numpy as np

from ..errors import InputError
from ..jsonio import check_value
from ..schemas import deepest_error, json_path, schema, validator

__all__ = ["check_profile", "profile_schema", "MAX_CONDITION"]

# Real displays have condition numbers of their primary matrix of a few to a few tens (common practice: sRGB-like
# primaries give about 5 in LMS); 1e6 leaves room for any real display and refuses degenerate ones whose inverse
# would turn rounding noise into colours.
MAX_CONDITION = 1e6


def profile_schema() -> dict:
    """The JSON Schema document for display profiles (``stimlab/data/profile.schema.json``)."""
    return schema("profile")


def _schema_message(error) -> str:
    value = error.instance
    shown = json.dumps(value) if isinstance(value, (int, float, str, bool)) or value is None else f"a {type(value).__name__}"
    if len(shown) > 60:
        shown = shown[:57] + "…"
    rule = error.validator
    if rule == "type":
        return f"{shown} is not a {error.validator_value}"
    if rule in ("minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum"):
        words = {"minimum": "at least", "maximum": "at most", "exclusiveMinimum": "above", "exclusiveMaximum": "below"}
        return f"{shown} is out of range: it must be {words[rule]} {error.validator_value}"
    if rule in ("minItems", "maxItems"):
        return f"needs {'at least' if rule == 'minItems' else 'at most'} {error.validator_value} values"
    if rule == "required":
        return f"{error.message.split(' is a required')[0]} is missing"
    return error.message if len(error.message) < 160 else error.message[:157] + "…"


def check_profile(data, name: str = "profile") -> dict:
    """Refuse a profile that could not be stored, shown or used exactly; return it unchanged.

    Parameters
    ----------
    data
        The parsed profile document.
    name
        File or field name to put in errors.

    Raises
    ------
    InputError
        With ``field`` the JSON path of the first problem and the fix in the message.
    """
    if not isinstance(data, dict):
        raise InputError("a display profile is a JSON object built by 'stimlab display build'", file=name)
    check_value(data, file=name)
    errors = sorted(validator("profile").iter_errors(data), key=lambda e: list(map(str, e.absolute_path)))
    if errors:
        error = deepest_error(errors[0])
        raise InputError(_schema_message(error) + "; rebuild the profile from the measurements", file=name,
                         field=json_path(error.absolute_path))
    primaries = data["primaries"]
    if primaries["kind"] == "spectra":
        wavelengths = np.asarray(primaries["wavelength_nm"], dtype=float)
        if np.any(np.diff(wavelengths) <= 0):
            raise InputError("wavelengths must rise strictly", file=name, field="primaries.wavelength_nm")
        for channel in ("red", "green", "blue", "black"):
            if len(primaries[channel]) != len(wavelengths):
                raise InputError(f"{len(primaries[channel])} values for {len(wavelengths)} wavelengths", file=name,
                                 field=f"primaries.{channel}")
    else:
        for channel in ("red", "green", "blue", "black"):
            x, y, Y = primaries[channel]
            if not (0 < x < 1 and 0 < y < 1 and x + y < 1) or (channel != "black" and Y <= 0):
                raise InputError(f"xyY ({x:g}, {y:g}, {Y:g}) is not a chromaticity with positive luminance",
                                 file=name, field=f"primaries.{channel}")
    for channel in ("red", "green", "blue"):
        entry = data["transfer"][channel]
        if entry["model"] == "table":
            x, y = entry["parameters"]["x"], entry["parameters"]["y"]
            if len(x) != len(y) or np.any(np.diff(x) <= 0):
                raise InputError("a table transfer needs as many outputs as inputs, inputs rising strictly",
                                 file=name, field=f"transfer.{channel}.parameters")
    _check_model(data, name)
    return data


def _check_model(data: dict, name: str) -> None:
    from ..colorimetry.display import DisplayModel

    try:
        with np.errstate(all="raise"):
            model = DisplayModel(data)
            condition = float(np.linalg.cond(model.M_LMS))
    except (np.linalg.LinAlgError, FloatingPointError, ValueError, ZeroDivisionError, KeyError, TypeError):
        condition = float("inf")
    if not np.isfinite(condition) or condition > MAX_CONDITION:
        raise InputError("the three primaries do not span colour space (two or more have the same or collinear "
                         "chromaticity, or one is black); measure the primaries again", file=name, field="primaries")
    outputs = model.level_outputs
    if not np.all(np.isfinite(outputs)) or not np.all(np.isfinite(model.M_LMS_inverse)):
        raise InputError("the transfer curves give non-finite luminance; rebuild the profile", file=name,
                         field="transfer")
    if model.white_luminance <= 0 or not np.isfinite(model.white_luminance):
        raise InputError("white has no luminance; measure the primaries again", file=name, field="primaries")
