"""Displays: list, add from measurement files (or xyY), and a page of what the display can show."""

from __future__ import annotations

import math

from flask import Blueprint, g, redirect, render_template, request, url_for

from ..colorimetry.display import DisplayModel
from ..colorimetry.stimulus import Background
from ..colorimetry.transfer import TRANSFER_MODELS
from ..errors import InputError
from ..profiles.measurements import CHANNELS, parse_spectra, parse_transfer
from ..profiles.profile import (
    DEFAULT_MAX_AGE_DAYS,
    build_profile,
    profile_age_days,
    profile_warnings,
    transfer_entry,
)
from . import current_store
from .errors import NotFound, WebError
from .plots import dkl_plane_plot, macleod_boynton_plot, transfer_plot
from .strict import whole_number

blueprint = Blueprint("displays", __name__)


def summary(profile: dict) -> dict:
    """What a technician checks first about a display, as plain numbers."""
    model = DisplayModel(profile)
    background = Background(model, [0.5, 0.5, 0.5])
    described = background.describe(background.LMS_0)
    return {
        "name": profile["name"], "sha256": profile["sha256"], "bits": profile["bits"],
        "refresh_hz": profile["refresh_hz"], "size_px": profile.get("size_px"), "size_cm": profile.get("size_cm"),
        "measured_by": profile.get("measured_by"), "measured_on": profile["measured_on"],
        "age_days": profile_age_days(profile), "white_cd_m2": model.white_luminance,
        "black_cd_m2": model.black_luminance,
        "primaries_xy": {c: xy.tolist() for c, xy in zip(CHANNELS, model.primaries_xy())},
        "dkl_limits": {axis: limits.tolist() for axis, limits in zip(("lum", "L-M", "S"), background.DKL_limits)},
        "quantisation_cone_contrast": described["quantisation_cone_contrast"],
        "approximate": model.is_approximate,
        "warnings": profile_warnings(profile, DEFAULT_MAX_AGE_DAYS),
        "transfer": {c: {"model": profile["transfer"][c]["model"], "rms": profile["transfer"][c]["rms"],
                         "max_abs": profile["transfer"][c]["max_abs"],
                         "alternatives": {k: v["rms"] for k, v in profile["transfer"][c]["alternatives"].items()}}
                     for c in CHANNELS},
        "notes": profile.get("notes", []),
    }


def _get(display_id: int) -> dict:
    display = current_store().display(g.db, display_id)
    if display is None:
        raise NotFound(f"there is no display {display_id}; pick one from the list")
    return display


def _pair(text: str, field: str, kind=float):
    if not text:
        return None
    parts = text.replace("×", ",").replace("x", ",").split(",")
    try:
        values = [kind(p.strip()) for p in parts]
    except ValueError:
        raise InputError(f"{text!r} is not two numbers W,H", field=field) from None
    if len(values) != 2:
        raise InputError(f"{text!r} is not two numbers W,H", field=field)
    return values


def _number(form, field: str, default, kind=float):
    text = (form.get(field) or "").strip()
    if not text:
        return default
    try:
        value = kind(text) if kind is float or len(text) <= 19 else kind("x")
    except ValueError:
        raise InputError(f"{text[:40]!r} is not a {'whole ' if kind is int else ''}number", field=field) from None
    if not math.isfinite(value):
        raise InputError(f"{text!r} is not a finite number", field=field)
    return value


def profile_from_form(form, files) -> dict:
    """Build a profile from the 'add a display' form (the same steps as ``stimlab display build``)."""
    bits = _number(form, "bits", 8, int)
    model = form.get("model") or "gog"
    if model not in TRANSFER_MODELS:
        raise InputError(f"choose one of {', '.join(TRANSFER_MODELS)}", field="model")
    upload = files.get("transfer")
    if upload is None or not upload.filename:
        raise InputError("choose the transfer measurements file (channel,level,luminance_cd_m2)", field="transfer")
    measurements = parse_transfer(_text(upload, "transfer"), bits, upload.filename)
    transfer = {}
    for channel, (levels, luminance) in measurements.items():
        try:
            transfer[channel] = transfer_entry(levels, luminance, bits, model)
        except InputError as error:
            raise InputError(f"channel {channel}: {error.message}", file=upload.filename, field="transfer") from None
    spectra = chromaticities = None
    upload = files.get("spectra")
    if upload is not None and upload.filename:
        spectra = parse_spectra(_text(upload, "spectra"), upload.filename)
    else:
        chromaticities = {}
        for channel in CHANNELS:
            field = f"xyY_{channel}"
            text = (form.get(field) or "").strip()
            if not text:
                raise InputError("upload the primaries' spectra, or give x,y,Y of every primary", field=field)
            try:
                chromaticities[channel] = [float(v) for v in text.split(",")]
            except ValueError:
                raise InputError(f"{text!r} is not three numbers x,y,Y", field=field) from None
    return build_profile(form.get("name", ""), transfer=transfer, bits=bits,
                         refresh_hz=_number(form, "refresh", 60.0), spectra=spectra, chromaticities=chromaticities,
                         size_cm=_pair(form.get("size_cm", ""), "size_cm"),
                         size_px=_pair(form.get("size_px", ""), "size_px", int),
                         measured_by=form.get("measured_by", "").strip(),
                         measured_on=(form.get("measured_on") or "").strip() or None)


def _text(upload, field: str) -> str:
    try:
        return upload.read().decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file; export the measurements as CSV", file=upload.filename,
                         field=field) from None


def _summarised(displays: list[dict]) -> list[dict]:
    """Displays with their summary; one stored before profiles were checked completely and that cannot be
    summarised is left out (archive it through the API) rather than breaking the whole list."""
    result = []
    for display in displays:
        try:
            result.append({**display, "summary": summary(display["profile"])})
        except Exception:  # noqa: BLE001 - an old unchecked profile must not take the list down
            continue
    return result


@blueprint.get("/displays")
def index():
    return render_template("displays.html", displays=_summarised(current_store().displays(g.db)))


@blueprint.get("/displays/new")
def new():
    return render_template("display_new.html", error=None, form={}, models=TRANSFER_MODELS)


@blueprint.post("/displays")
def create():
    try:
        profile = profile_from_form(request.form, request.files)
    except InputError as error:
        return render_template("display_new.html", error=error, form=request.form, models=TRANSFER_MODELS), 400
    display_id = current_store().add_display(g.db, profile)
    return redirect(url_for("displays.show", display_id=display_id), 303)


@blueprint.get("/displays/<int:display_id>")
def show(display_id: int):
    display = _get(display_id)
    profile = display["profile"]
    model = DisplayModel(profile)
    background = Background(model, [0.5, 0.5, 0.5])
    axes = [{"label": f"{name} {sign}", "lm": lm, "s": s, "ok": True}
            for name, sign, lm, s in (("L−M", "+", background.DKL_limits[1, 1], 0), ("L−M", "−",
                                      background.DKL_limits[1, 0], 0), ("S", "+", 0, background.DKL_limits[2, 1]),
                                      ("S", "−", 0, background.DKL_limits[2, 0]))]
    return render_template("display.html", display=display, summary=summary(profile),
                           transfer=transfer_plot(profile), plane=dkl_plane_plot(background, axes),
                           mb=macleod_boynton_plot(model))


# -- API ------------------------------------------------------------------------------------------------------
@blueprint.get("/api/displays")
def api_index():
    archived = request.args.get("archived") in ("1", "true", "yes")
    return {"displays": [{k: v for k, v in d.items() if k != "profile"}
                         for d in _summarised(current_store().displays(g.db, archived=archived))]}


@blueprint.post("/api/displays/<int:display_id>/archive")
def api_archive(display_id: int):
    """Hide a display from lists and defaults; sessions run on it still read its profile."""
    _get(display_id)
    current_store().archive_display(g.db, display_id, True)
    return api_show(display_id)


@blueprint.post("/api/displays/<int:display_id>/unarchive")
def api_unarchive(display_id: int):
    _get(display_id)
    current_store().archive_display(g.db, display_id, False)
    return api_show(display_id)


@blueprint.get("/api/displays/<int:display_id>")
def api_show(display_id: int):
    display = _get(display_id)
    return {**{k: v for k, v in display.items() if k != "profile"}, "summary": summary(display["profile"]),
            "profile": display["profile"]}


@blueprint.post("/api/displays")
def api_create():
    if request.is_json:
        body = request.get_json(silent=True)
        if not isinstance(body, dict) or "profile" not in body:
            raise WebError("send {\"profile\": {...}} with a profile built by 'stimlab display build'", field="profile")
        from ..profiles.profile import profile_from_dict

        profile = profile_from_dict(body["profile"], "profile")
    else:
        profile = profile_from_form(request.form, request.files)
    display_id = current_store().add_display(g.db, profile)
    return api_show(display_id), 201


def default_display_id(requested=None) -> int | None:
    """The display to audit against: the one asked for, else the most recently added."""
    if requested not in (None, ""):
        return _get(whole_number(requested, "display", minimum=1))["id"]
    displays = current_store().displays(g.db)
    return displays[0]["id"] if displays else None
