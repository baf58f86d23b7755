"""Displays: list, add from measurement files (or xyY), and a page of what the display can show."""

from __future__ import annotations

import math

from flask import Blueprint, g, redirect, render_template, request, url_for

from ..colorimetry.transfer import TRANSFER_MODELS
from ..errors import InputError
from ..figures import spec_key
from ..profiles.figures import display_specs
from ..profiles.figures import render as render_figure
from ..profiles.measurements import CHANNELS, parse_spectra, parse_transfer
from ..profiles.profile import (
    build_profile,
    transfer_entry,
)
from ..profiles.summary import display_summary
from . import current_store
from .errors import NotFound, WebError
from .figures import figure_response
from .strict import whole_number

blueprint = Blueprint("displays", __name__)


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


FORM_LABELS = {
    "name": "Name", "bits": "Bits per channel", "refresh": "Refresh rate (Hz)", "size_cm": "Visible size (cm)",
    "size_px": "Resolution (pixels)", "measured_by": "Measured by", "measured_on": "Measured on",
    "spectra": "Primary spectra (CSV)", "transfer": "Transfer measurements (CSV)", "model": "Transfer model",
    "xyY_red": "Red x,y,Y", "xyY_green": "Green x,y,Y", "xyY_blue": "Blue x,y,Y",
}
"""The 'add a display' form's fields by name, with the labels the page shows (and its messages use)."""
PROFILE_FIELDS = {"red": "xyY_red", "green": "xyY_green", "blue": "xyY_blue", "size-cm": "size_cm",
                  "size-px": "size_px", "refresh_hz": "refresh"}
"""Names :func:`build_profile` gives its fields, as the form names them."""
BITS, REFRESH_HZ = (1, 16), (20, 1000)  # what build_profile accepts


class FormFieldError(InputError):
    """A problem with one field of the form, named in the message by the field's label (so not again as
    "at xyY_green"); ``field`` still holds the input's name, for the page to mark it."""

    def where(self) -> str:
        return self.file or ""


def labelled(error: InputError) -> InputError:
    """``error`` worded for the form: a field it names by a program name gets the form's label instead."""
    field = PROFILE_FIELDS.get(error.field, error.field)
    if isinstance(error, FormFieldError) or field not in FORM_LABELS or error.row is not None:
        return error
    if error.file:  # the uploaded file's name already says which field
        return FormFieldError(error.message, file=error.file, field=field)
    return FormFieldError(f"{FORM_LABELS[field]}: {error.message}", field=field)


def _refuse(field: str, problem: str):
    raise FormFieldError(f"{FORM_LABELS[field]} {problem}", field=field)


def _shown(text: str) -> str:
    return repr(text if len(text) <= 40 else text[:40] + "…")


def _numbers(text: str, field: str, count: int, words: str, kind=float) -> list | None:
    """Exactly ``count`` numbers separated by commas (a pair may use × or x), or None for an empty field."""
    if not text:
        return None
    if count == 2:
        text = text.replace("×", ",").replace("x", ",")
    parts = [p.strip().replace("\u2212", "-") for p in text.split(",")]
    try:
        values = [kind(p) if len(p) <= 40 else kind("x") for p in parts]
    except ValueError:
        values = None
    if values is None or len(values) != count or not all(math.isfinite(v) for v in values):
        _refuse(field, f"needs {words}, e.g. {FORM_EXAMPLES[field]}; got {_shown(text)}")
    return values


FORM_EXAMPLES = {"size_cm": "53.1,29.9", "size_px": "1920,1080", "xyY_red": "0.64,0.33,21.3",
                 "xyY_green": "0.30,0.60,71.5", "xyY_blue": "0.15,0.06,7.2"}  # sRGB's primaries (IEC 61966-2-1)


def _bounded(form, field: str, default, low, high, kind=float):
    text = (form.get(field) or "").strip().replace("\u2212", "-")
    if not text:
        return default
    words = f"a {'whole ' if kind is int else ''}number from {low:g} to {high:g}"
    try:
        value = kind(text) if len(text) <= 40 else kind("x")
    except ValueError:
        _refuse(field, f"must be {words}; got {_shown(text)}")
    if not (math.isfinite(value) and low <= value <= high):
        _refuse(field, f"must be {words}; got {_shown(text)}")
    return value


def profile_from_form(form, files) -> dict:
    """Build a profile from the 'add a display' form (the same steps as ``stimlab display build``); an error names
    the field by the form's label."""
    try:
        return _profile_from_form(form, files)
    except InputError as error:
        raise labelled(error) from None


def _profile_from_form(form, files) -> dict:
    bits = _bounded(form, "bits", 8, *BITS, kind=int)
    refresh_hz = _bounded(form, "refresh", 60.0, *REFRESH_HZ)
    size_cm = _numbers((form.get("size_cm") or "").strip(), "size_cm", 2, "two numbers, width,height")
    size_px = _numbers((form.get("size_px") or "").strip(), "size_px", 2, "two whole numbers, width,height", int)
    transfer_model = form.get("model") or "gog"
    if transfer_model not in TRANSFER_MODELS:
        raise InputError(f"choose one of {', '.join(TRANSFER_MODELS)}", field="model")
    upload = files.get("transfer")
    if upload is None or not upload.filename:
        raise InputError("choose the transfer measurements file (channel,level,luminance_cd_m2)", field="transfer")
    measurements = parse_transfer(_text(upload, "transfer"), bits, upload.filename, transfer_model)
    transfer = {}
    for channel, (levels, luminance) in measurements.items():
        try:
            transfer[channel] = transfer_entry(levels, luminance, bits, transfer_model)
        except InputError as error:
            raise InputError(f"channel {channel}: {error.message}", file=upload.filename, field="transfer") from None
    spectra = chromaticities = None
    upload = files.get("spectra")
    if upload is not None and upload.filename:
        spectra = parse_spectra(_text(upload, "spectra"), upload.filename)
    else:
        chromaticities = {}
        for channel in CHANNELS:  # every field checked in turn, each for exactly three numbers
            field = f"xyY_{channel}"
            text = (form.get(field) or "").strip()
            if not text:
                _refuse(field, "is empty: upload the primaries' spectra, or give x,y,Y of every primary")
            chromaticities[channel] = _numbers(text, field, 3, "three numbers x,y,Y (Y in cd/m²)")
    return build_profile(form.get("name", ""), transfer=transfer, bits=bits, refresh_hz=refresh_hz, spectra=spectra,
                         chromaticities=chromaticities, size_cm=size_cm, size_px=size_px,
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
            result.append({**display, "summary": display_summary(display["profile"])})
        except Exception:  # noqa: BLE001 - an old unchecked profile must not take the list down
            continue
    return result


@blueprint.get("/displays")
def index():
    return render_template("displays.html", displays=_summarised(current_store().displays(g.db)),
                           default_id=chosen_default_id(),
                           default_chosen=current_store().setting(g.db, DEFAULT_DISPLAY) is not None)


@blueprint.get("/displays/new")
def new():
    return render_template("display_new.html", error=None, form={}, models=TRANSFER_MODELS, labels=FORM_LABELS)


@blueprint.post("/displays")
def create():
    try:
        profile = profile_from_form(request.form, request.files)
    except InputError as error:
        return render_template("display_new.html", error=error, form=request.form, models=TRANSFER_MODELS,
                               labels=FORM_LABELS), 400
    display_id = current_store().add_display(g.db, profile)
    return redirect(url_for("displays.show", display_id=display_id), 303)


@blueprint.get("/displays/<int:display_id>")
def show(display_id: int):
    display = _get(display_id)
    profile = display["profile"]
    # each figure's URL carries its content's hash, so a recalibrated display never shows a cached old figure
    figures = {name: spec_key(spec)[:16] for name, spec in display_specs(profile).items()}
    return render_template("display.html", display=display, summary=display_summary(profile), figures=figures,
                           is_default=display["id"] == chosen_default_id())


def _slug(display: dict) -> str:
    return "".join(c if c.isalnum() or c in "-_" else "_" for c in display["name"]).strip("_") or "display"


@blueprint.get("/displays/<int:display_id>/figures/<figure>.<fmt>")
def display_figure(display_id: int, figure: str, fmt: str):
    """A figure of the display (``transfer``, ``gamut``, ``macleod_boynton``) as SVG or PDF."""
    display = _get(display_id)
    return figure_response(display_specs(display["profile"]), figure, fmt,
                           f"{_slug(display)}_v{display['version']}_{figure}", render_figure)


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
    return {**{k: v for k, v in display.items() if k != "profile"}, "summary": display_summary(display["profile"]),
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
    """The display to audit against: the one asked for, else the lab's default (a stored setting), else the first
    display added. Adding a display never changes it."""
    if requested not in (None, ""):
        return _get(whole_number(requested, "display", minimum=1))["id"]
    return chosen_default_id()


DEFAULT_DISPLAY = "default_display"


def chosen_default_id() -> int | None:
    """The lab's chosen default display, else the first one added; never an archived one."""
    chosen = current_store().setting(g.db, DEFAULT_DISPLAY)
    if chosen is not None and g.db.execute("SELECT 1 FROM displays WHERE id = ? AND archived_at IS NULL",
                                           (chosen,)).fetchone():
        return chosen
    row = g.db.execute("SELECT MIN(id) FROM displays WHERE archived_at IS NULL").fetchone()
    return row[0]


def _set_default(display_id: int) -> int:
    display_id = _get(display_id)["id"]
    current_store().set_setting(g.db, DEFAULT_DISPLAY, display_id)
    return display_id


@blueprint.post("/displays/<int:display_id>/default")
def make_default(display_id: int):
    _set_default(display_id)
    back = request.form.get("next") or ""
    return redirect(back if back.startswith("/displays") else url_for("displays.index"), 303)


@blueprint.put("/api/settings/default-display")
def api_set_default():
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        raise WebError("send {\"display\": <display id>}", field="display")
    return {"default_display": _set_default(whole_number(body.get("display"), "display", minimum=1))}


@blueprint.get("/api/settings/default-display")
def api_default():
    return {"default_display": chosen_default_id(),
            "chosen": current_store().setting(g.db, DEFAULT_DISPLAY) is not None}


@blueprint.get("/displays/<int:display_id>/profile.json")
def download(display_id: int):
    import json

    from flask import Response

    display = _get(display_id)
    slug = _slug(display)
    return Response(json.dumps(display["profile"], indent=1, ensure_ascii=False) + "\n", mimetype="application/json",
                    headers={"Content-Disposition": f'attachment; filename="{slug}_v{display["version"]}.json"'})
