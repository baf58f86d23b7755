// The runner page: load the compiled session, run the checks, show the cautions, then present the trials.
import { send } from "../api.js";
import { colourSelfTest, geometry, measureRefresh, timerResolution } from "./checks.js";
import { takeSession, whenDisplaced } from "./lease.js";
import { SessionLog } from "./log.js";
import { Painter } from "./paint.js";
import { Schedule } from "./schedule.js";

const root = document.getElementById("runner");
const message = document.getElementById("runner-message");
const canvas = document.getElementById("stimulus");
const sessionId = Number(root.dataset.session);
const params = new URLSearchParams(location.search);

function say(html, kind = "info") {
  message.className = `runner-message ${kind}`;
  message.hidden = false;
  message.innerHTML = html;
}

function escapeText(text) {
  const span = document.createElement("span");
  span.textContent = text;
  return span.innerHTML;
}

function stop(title, detail, log) {
  log?.event("session_stopped", { reason: title, detail });
  log?.flush();
  document.body.classList.remove("presenting");
  say(`<h1>${escapeText(title)}</h1><p>${escapeText(detail)}</p>`, "error");
  window.stimlabState = "stopped";
}

async function main() {
  const loaded = await send("GET", `/api/sessions/${sessionId}`);
  if (!loaded.ok) return stop("This session cannot be loaded", loaded.body.error?.message ?? "unknown error");
  const { compiled: data, progress, status } = loaded.body;
  if (status === "complete") return stop("This session is complete", "Start a new session from the Run page.");
  const runToken = root.dataset.runToken;
  const log = await new SessionLog(sessionId, {
    nextSeq: (progress.last_seq ?? -1) + 1, nextBatch: (progress.last_batch ?? -1) + 1, runToken }).open();
  log.onStatus = (state) => {
    root.dataset.link = state;
    if (state === "unreachable") document.getElementById("link-status").hidden = false;
    if (state === "reachable") document.getElementById("link-status").hidden = true;
  };
  window.stimlabLog = log;
  if (!(await takeSession(log, say))) return;
  const resumed = progress.last_seq !== null;
  log.event(resumed ? "resumed" : "session_start", { completed_trials: progress.completed_trials.length,
    last_frame: progress.last_frame });

  const painter = new Painter(canvas, data);
  if (!painter.supported) {
    return stop("This browser cannot draw this display's bit depth",
      `The profile is ${data.display.bits}-bit; this browser has no float16 canvas. Use an 8-bit profile of the ` +
      "display, or a current Chromium.", log);
  }
  say("<p>Measuring the refresh rate (2 s)…</p>");
  const refresh = await measureRefresh(2000);
  const colours = [data.background.device, [0, 0, 0], [painter.dMax, painter.dMax, painter.dMax]];
  for (const condition of data.conditions) {
    for (const stimulus of Object.values(condition.stimuli)) if (stimulus.colour.device) colours.push(stimulus.colour.device);
  }
  const checks = {
    refresh, profile_refresh_hz: data.display.refresh_hz,
    refresh_agrees: Math.abs(refresh.refresh_hz - data.display.refresh_hz) <= 0.01 * data.display.refresh_hz,
    geometry: geometry(data.display.size_px), timers: timerResolution(),
    colour: colourSelfTest(painter, colours.slice(0, 64), params.get("simulate") === "colour-mismatch"),
    user_agent: navigator.userAgent,
  };
  log.event("checks", checks);
  await send("POST", `/api/sessions/${sessionId}/checks`, checks, { runToken });
  if (!checks.refresh_agrees) {
    return stop("The refresh rate does not match the display profile",
      `Measured ${refresh.refresh_hz.toFixed(2)} Hz (median frame interval ${refresh.median_interval_ms.toFixed(3)} ms); ` +
      `the profile says ${data.display.refresh_hz} Hz. Set the monitor to its calibrated mode, or use its profile.`, log);
  }
  if (!checks.colour.passed) {
    const first = checks.colour.mismatches[0];
    return stop("The colour pipeline changes the device values",
      `Drew ${first.drawn.join(", ")} and read back ${first.read.join(", ")} (${checks.colour.mismatches.length} of ` +
      `${checks.colour.tested} differ). Start the browser with --force-color-profile=srgb and turn off any colour ` +
      "management or night-light setting, then reload.", log);
  }
  const warnings = [];
  if (!checks.geometry.screen_matches) {
    warnings.push(`This screen is ${checks.geometry.screen_px.join("×")} px but the profile says ` +
      `${data.display.size_px.join("×")} px: sizes in degrees will be wrong on another screen.`);
  }
  if (!checks.timers.cross_origin_isolated) warnings.push("Timers are coarsened to 100 µs (page not isolated).");
  const caution = data.audit?.caution;
  say(`<h1>${escapeText(data.protocol.title)}</h1>` +
    (resumed ? `<p>Resuming: ${progress.completed_trials.length} of ${data.trials.length} trials done.</p>` : "") +
    (caution ? `<p class="caution"><strong>Photosensitivity:</strong> ${escapeText(caution)}</p>` : "") +
    warnings.map((w) => `<p class="warn">${escapeText(w)}</p>`).join("") +
    "<p>Press <kbd>Space</kbd> to begin. <kbd>Esc</kbd> pauses at any time.</p>");
  window.stimlabState = "ready";

  const schedule = new Schedule({ data, painter, log, progress: log.resumeProgress(progress) });
  window.stimlabSchedule = schedule;
  whenDisplaced(log, schedule, (title, detail) => stop(title, detail, log));
  schedule.onFinish = async () => {
    await log.flush();
    document.body.classList.remove("presenting");
    if (document.fullscreenElement) document.exitFullscreen().catch(() => {});
    say("<h1>Thank you</h1><p>The session is complete.</p>");
    window.stimlabState = "finished";
  };

  let started = false;
  document.addEventListener("keydown", async (event) => {
    if (!started && event.key === " ") {
      event.preventDefault();
      started = true;
      try {
        await document.documentElement.requestFullscreen();
      } catch {
        log.event("fullscreen_refused", {});
      }
      message.hidden = true;
      document.body.classList.add("presenting");
      window.stimlabState = "running";
      schedule.start();
      return;
    }
    if (!started) return;
    if (event.key === "Escape") {
      schedule.pause("experimenter");
      say("<p>Paused. Press <kbd>Space</kbd> to go on (the trial starts again, fully adapted).</p>");
      return;
    }
    if (schedule.paused && event.key === " ") {
      event.preventDefault();
      message.hidden = true;
      document.documentElement.requestFullscreen?.().catch(() => {});
      schedule.resume();
      return;
    }
    schedule.key(event);
  });
  document.addEventListener("fullscreenchange", () => {
    if (started && !document.fullscreenElement && window.stimlabState === "running") {
      schedule.pause("left_fullscreen");
      say("<p>Full screen was left, so the trial paused. Press <kbd>Space</kbd> to go on.</p>");
    }
  });
  document.addEventListener("visibilitychange", () => {
    if (document.visibilityState === "hidden") {
      if (started) schedule.pause("page_hidden");
      log.event("page_hidden", {});
      log.flushOnHide();
    }
  });
}

main();
