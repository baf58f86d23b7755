// Calibration patches: one patch at a time in its device levels, the reading typed underneath and saved at once.
// Patches are shown only full screen and only on a screen of the resolution entered for the run: elsewhere a patch
// could land off screen, or at the wrong place for the instrument, while the bar still counts patches.
import { send } from "./api.js";
import { Painter } from "./runner/paint.js";

const root = document.getElementById("calibration");
const runId = Number(root.dataset.run);
const patch = Number(root.dataset.patch);
const [offsetX, offsetY] = (root.dataset.offset || "0,0").split(",").map(Number);
const form = document.getElementById("reading");
const readingHolder = document.getElementById("reading-holder");
const gate = document.getElementById("gate");
const gateReason = document.getElementById("gate-reason");
const label = document.getElementById("step-label");
const status = document.getElementById("reading-status");
const fields = ["luminance", "x", "y"].map((name) => document.getElementById(`r-${name}`));

const loaded = (await send("GET", `/api/calibrations/${runId}`)).body;
const { plan, settings } = loaded;
const readings = new Map(loaded.readings.map((r) => [r.step, r]));
const screenPx = () => [Math.round(screen.width * devicePixelRatio), Math.round(screen.height * devicePixelRatio)];
const painter = new Painter(document.getElementById("stimulus"), {
  display: { bits: settings.bits, size_px: settings.size_px ?? screenPx() } });
// Resume at the first patch without a reading.
let index = plan.findIndex((s) => !readings.has(s.step));
if (index < 0) index = plan.length - 1;
let showing = false;

// Why the patches cannot be shown on this screen now, or null.
function refusal() {
  const [width, height] = screenPx();
  if (settings.size_px && (settings.size_px[0] !== width || settings.size_px[1] !== height)) {
    return `This screen is ${width}×${height} pixels, but the run was set up for ${settings.size_px.join("×")}: ` +
      "a patch could land off screen. Open this page on the display being calibrated, set it to that " +
      "resolution, or start a run with this screen's resolution.";
  }
  const [w, h] = settings.size_px ?? [width, height];
  if (Math.abs(offsetX) + patch / 2 > w / 2 || Math.abs(offsetY) + patch / 2 > h / 2) {
    return `A ${patch}-pixel patch at (${offsetX}, ${offsetY}) from the centre does not fit on ${w}×${h} pixels; ` +
      "start a run with a smaller patch or offset.";
  }
  return null;
}

function hidePatches(reason) {
  showing = false;
  painter.draw({ background: [0, 0, 0], items: [], fixation: null });
  readingHolder.hidden = true;
  gate.hidden = false;
  gateReason.hidden = !reason;
  gateReason.textContent = reason ?? "";
  window.calibrationRefused = reason ?? null;
  window.calibrationStep = undefined;
}

function show() {
  const step = plan[index];
  painter.draw({ background: [0, 0, 0], items: [], fixation: null });
  painter.ctx.fillStyle = painter.css(step.device);
  const [cx, cy] = painter.at([offsetX, offsetY]);
  painter.ctx.fillRect(cx - patch / 2, cy - patch / 2, patch, patch);
  const done = readings.get(step.step);
  label.textContent = `Patch ${index + 1} of ${plan.length}: ${step.label} (${step.device.join(", ")})`;
  fields[0].value = done?.luminance ?? "";
  fields[1].value = done?.x ?? "";
  fields[2].value = done?.y ?? "";
  fields[0].focus();
  window.calibrationStep = { index, step, measured: readings.size, total: plan.length };
}

document.getElementById("go-fullscreen").addEventListener("click", async () => {
  const before = refusal();
  if (before) return hidePatches(before);
  try {
    await document.documentElement.requestFullscreen();
  } catch (error) {
    return hidePatches(`The browser did not allow full screen (${error.message || error.name}); allow it for this ` +
      "page and try again. Patches are shown full screen only.");
  }
  const after = refusal(); // the screen may report its real size only once full screen
  if (after) {
    document.exitFullscreen().catch(() => {});
    return hidePatches(after);
  }
  gate.hidden = true;
  readingHolder.hidden = false;
  showing = true;
  window.calibrationRefused = null;
  show();
});

document.addEventListener("fullscreenchange", () => {
  if (!document.fullscreenElement && showing) hidePatches("Full screen was left, so the patches are hidden. Go full screen again to continue.");
});

form.addEventListener("submit", async (event) => {
  event.preventDefault();
  if (!showing) return;
  const step = plan[index];
  const body = { luminance: fields[0].value, x: fields[1].value, y: fields[2].value };
  const result = await send("PUT", `/api/calibrations/${runId}/readings/${step.step}`, body);
  if (!result.ok) {
    status.className = "bad";
    status.textContent = result.body.error?.message ?? "not saved";
    document.getElementById(`r-${result.body.error?.field ?? "luminance"}`)?.focus();
    return;
  }
  readings.set(step.step, { step: step.step, luminance: Number(body.luminance) });
  status.className = "";
  status.textContent = `saved ${readings.size} of ${plan.length}`;
  if (readings.size === plan.length && index === plan.length - 1) {
    label.textContent = "Every patch is measured: go back to the run page to build the profile.";
    window.calibrationStep = { done: true, measured: readings.size, total: plan.length };
    return;
  }
  index = Math.min(plan.length - 1, index + 1);
  show();
});

document.addEventListener("keydown", (event) => {
  if (!showing) return;
  if (event.key === "PageDown") { index = Math.min(plan.length - 1, index + 1); show(); }
  if (event.key === "PageUp") { index = Math.max(0, index - 1); show(); }
});
document.getElementById("go-fullscreen").disabled = false; // enabled once the run is loaded
window.calibrationReady = true;
