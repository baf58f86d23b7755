// Calibration patches: one patch at a time in its device levels, the reading typed underneath and saved at once.
import { send } from "./api.js";
import { Painter } from "./runner/paint.js";

const root = document.getElementById("calibration");
const runId = Number(root.dataset.run);
const patch = Number(root.dataset.patch);
const [offsetX, offsetY] = (root.dataset.offset || "0,0").split(",").map(Number);
const form = document.getElementById("reading");
const label = document.getElementById("step-label");
const status = document.getElementById("reading-status");
const fields = ["luminance", "x", "y"].map((name) => document.getElementById(`r-${name}`));

const loaded = (await send("GET", `/api/calibrations/${runId}`)).body;
const { plan, settings } = loaded;
const readings = new Map(loaded.readings.map((r) => [r.step, r]));
const painter = new Painter(document.getElementById("stimulus"), {
  display: { bits: settings.bits, size_px: settings.size_px ?? [innerWidth * devicePixelRatio, innerHeight * devicePixelRatio] } });
// Resume at the first patch without a reading.
let index = plan.findIndex((s) => !readings.has(s.step));
if (index < 0) index = plan.length - 1;

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

form.addEventListener("submit", async (event) => {
  event.preventDefault();
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
  if (event.key === "PageDown") { index = Math.min(plan.length - 1, index + 1); show(); }
  if (event.key === "PageUp") { index = Math.max(0, index - 1); show(); }
});
show();
