"""Calibration runs: the browser shows each patch full screen, the technician types each reading as it is shown
(saved at once, so an interrupted run continues where it stopped), and stimlab fits, builds a new profile version
and validates it."""

from __future__ import annotations

import json
import math

from flask import Blueprint, g, redirect, render_template, request, url_for

from ..errors import InputError
from ..profiles.calibration import (
    DEFAULT_TOLERANCE,
    drift,
    measurement_plan,
    profile_from_readings,
    validate,
)
from ..profiles.measurements import parse_spectra
from ..sessions.store import utc_now
from . import current_store
from .displays import _number, _pair
from .errors import NotFound, WebError
from .strict import whole_number

blueprint = Blueprint("calibrations", __name__)


def _run(run_id: int) -> dict:
    row = g.db.execute("SELECT * FROM calibration_runs WHERE id = ?", (run_id,)).fetchone()
    if row is None:
        raise NotFound(f"there is no calibration run {run_id}")
    run = dict(row)
    for key in ("settings", "plan", "result"):
        run[key] = json.loads(run[key]) if run[key] else None
    run["readings"] = [dict(r) for r in g.db.execute(
        "SELECT step, luminance, x, y, measured_at FROM calibration_readings WHERE run_id = ? ORDER BY step", (run_id,))]
    run["has_spectra"] = run.pop("spectra") is not None
    return run


def _pair_signed(text: str, field: str) -> list[int]:
    """An 'x,y' offset in pixels from the screen centre (right and up positive); empty means centred."""
    if not text.strip():
        return [0, 0]
    try:
        values = [int(round(float(v))) for v in text.split(",")]
    except ValueError:
        raise InputError(f"{text!r} is not two numbers x,y", field=field) from None
    if len(values) != 2:
        raise InputError(f"{text!r} is not two numbers x,y", field=field)
    return values


@blueprint.get("/calibrations/new")
def new():
    display = None
    if request.args.get("display"):
        display = current_store().display(g.db, whole_number(request.args["display"], "display"))
    return render_template("calibration_new.html", display=display and display["profile"], error=None)


@blueprint.post("/calibrations")
def create():
    form = request.form
    try:
        name = form.get("name", "").strip()
        if not name:
            raise InputError("give the display's name", field="name")
        bits = _number(form, "bits", 8, int)
        if not 1 <= bits <= 16:
            raise InputError("bits must be 1–16", field="bits")
        settings = {"bits": bits, "refresh_hz": _number(form, "refresh", 60.0),
                    "size_cm": _pair(form.get("size_cm", ""), "size_cm"),
                    "size_px": _pair(form.get("size_px", ""), "size_px", int),
                    "measured_by": form.get("measured_by", "").strip(),
                    "patch_px": _number(form, "patch_px", 400, int),
                    "patch_offset_px": _pair_signed(form.get("patch_offset_px", ""), "patch_offset_px"),
                    "tolerance": {"luminance_percent": _number(form, "tolerance_percent", 2.0),
                                  "delta_uv": _number(form, "tolerance_uv", 0.004)}}
        plan = measurement_plan(bits, _number(form, "levels", 12, int))
    except InputError as error:
        return render_template("calibration_new.html", display=None, error=error), 400
    cursor = g.db.execute("INSERT INTO calibration_runs (name, settings, plan, created_at) VALUES (?, ?, ?, ?)",
                          (name, json.dumps(settings), json.dumps(plan), utc_now()))
    return redirect(url_for("calibrations.show", run_id=cursor.lastrowid), 303)


@blueprint.get("/calibrations/<int:run_id>")
def show(run_id: int):
    run = _run(run_id)
    readings = {r["step"]: r for r in run["readings"]}
    return render_template("calibration.html", run=run, readings=readings,
                           result=run["result"], measured=len(readings), total=len(run["plan"]))


@blueprint.get("/calibrations/<int:run_id>/patches")
def patches(run_id: int):
    return render_template("calibration_patches.html", run=_run(run_id))


@blueprint.get("/api/calibrations/<int:run_id>")
def api_show(run_id: int):
    return _run(run_id)


def _reading(body) -> tuple[float, float | None, float | None]:
    if not isinstance(body, dict):
        raise InputError("send {\"luminance\": cd/m², \"x\": …, \"y\": …}", field="body")
    values = {}
    for key in ("luminance", "x", "y"):
        value = body.get(key)
        if value in (None, "") and key != "luminance":
            values[key] = None
            continue
        try:
            values[key] = float(value)
        except (TypeError, ValueError):
            raise InputError(f"{value!r} is not a number", field=key) from None
        if not math.isfinite(values[key]):
            raise InputError("must be a finite number", field=key)
    if values["luminance"] < 0:
        raise InputError("luminance cannot be negative", field="luminance")
    for key in ("x", "y"):
        if values[key] is not None and not 0 < values[key] < 1:
            raise InputError(f"chromaticity {key} must lie between 0 and 1", field=key)
    if (values["x"] is None) != (values["y"] is None):
        raise InputError("give both x and y, or neither", field="y" if values["y"] is None else "x")
    return values["luminance"], values["x"], values["y"]


@blueprint.put("/api/calibrations/<int:run_id>/readings/<int:step>")
def api_reading(run_id: int, step: int):
    run = _run(run_id)
    if not 0 <= step < len(run["plan"]):
        raise WebError(f"step must be 0–{len(run['plan']) - 1}", field="step")
    luminance, x, y = _reading(request.get_json(silent=True))
    g.db.execute("INSERT INTO calibration_readings VALUES (?, ?, ?, ?, ?, ?) ON CONFLICT (run_id, step) DO UPDATE "
                 "SET luminance = excluded.luminance, x = excluded.x, y = excluded.y, measured_at = excluded.measured_at",
                 (run_id, step, luminance, x, y, utc_now()))
    return {"step": step, "saved": True}


@blueprint.post("/calibrations/<int:run_id>/spectra")
def upload_spectra(run_id: int):
    _run(run_id)
    upload = request.files.get("spectra")
    if upload is None or not upload.filename:
        raise InputError("choose the spectroradiometer's CSV (wavelength_nm,red,green,blue[,black])", field="spectra")
    try:
        text = upload.read().decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file", file=upload.filename, field="spectra") from None
    wavelengths, primaries, black = parse_spectra(text, upload.filename)
    g.db.execute("UPDATE calibration_runs SET spectra = ? WHERE id = ?",
                 (json.dumps({"wavelength_nm": wavelengths.tolist(), "primaries": primaries.tolist(),
                              "black": None if black is None else black.tolist()}), run_id))
    return redirect(url_for("calibrations.show", run_id=run_id), 303)


def build(run_id: int, transfer_model: str | None) -> dict:
    import numpy as np

    run = _run(run_id)
    settings = run["settings"]
    row = g.db.execute("SELECT spectra FROM calibration_runs WHERE id = ?", (run_id,)).fetchone()
    spectra = None
    if row["spectra"]:
        data = json.loads(row["spectra"])
        spectra = (np.array(data["wavelength_nm"]), np.array(data["primaries"]),
                   None if data["black"] is None else np.array(data["black"]))
    profile, scores = profile_from_readings(
        run["plan"], run["readings"], name=run["name"], bits=settings["bits"], refresh_hz=settings["refresh_hz"],
        size_cm=settings["size_cm"], size_px=settings["size_px"], measured_by=settings["measured_by"],
        spectra=spectra, transfer_model=transfer_model or None)
    tolerance = settings.get("tolerance") or DEFAULT_TOLERANCE
    result = {"scores": scores, "validation": validate(profile, run["plan"], run["readings"], tolerance),
              "drift": drift(run["plan"], run["readings"], tolerance["luminance_percent"]),
              "transfer_models": {c: profile["transfer"][c]["model"] for c in ("red", "green", "blue")},
              "recommended": {c: profile["transfer"][c]["recommended"] for c in ("red", "green", "blue")}}
    display_id = current_store().add_display(g.db, profile)
    result["display_id"] = display_id
    g.db.execute("UPDATE calibration_runs SET display_id = ?, result = ? WHERE id = ?",
                 (display_id, json.dumps(result), run_id))
    return result


@blueprint.post("/calibrations/<int:run_id>/build")
def build_form(run_id: int):
    build(run_id, request.form.get("model"))
    return redirect(url_for("calibrations.show", run_id=run_id), 303)


@blueprint.post("/api/calibrations/<int:run_id>/build")
def api_build(run_id: int):
    body = request.get_json(silent=True) or {}
    return build(run_id, body.get("model"))
