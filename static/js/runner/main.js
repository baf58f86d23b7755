// The runner page: load the compiled session, create the canvas and its drawing context before anything else can
// touch it, run the checks, show the instructions on the background, then pre-adapt and present the trials.
// Every screen (ready, pre-adaptation, break, pause, end, error) is the background with a text panel (screens.js).
import { send } from "../api.js";
import { colourSelfTest, geometry, measureRefresh, timerResolution } from "./checks.js";
import { takeSession, whenDisplaced } from "./lease.js";
import { SessionLog } from "./log.js";
import { Painter } from "./paint.js";
import { Schedule } from "./schedule.js";
import { Break, Countdown, Screens } from "./screens.js";

const root = document.getElementById("runner");
const message = document.getElementById("runner-message");
const endForm = document.getElementById("end-early");
const sessionId = Number(root.dataset.session);
const runToken = root.dataset.runToken;
const params = new URLSearchParams(location.search);

let screens = null;

function setState(state) {
  window.stimlabState = state;
  root.dataset.state = state;
}

// The canvas carries the text; the hidden live region repeats it for screen readers (and for tests).
function mirror(lines) {
  message.textContent = "";
  for (const line of lines) {
    const p = document.createElement("p");
    p.textContent = line;
    message.append(p);
  }
}

// Before anything is drawn (the session is open in another window), a message with controls shows as page text.
function say(html, kind = "info") {
  message.className = `runner-message visible ${kind}`;
  message.innerHTML = html;
}

function fillIn(text, values) {
  return text.replace(/\{(\w+)\}/g, (whole, name) => (name in values ? String(values[name]) : whole));
}

function show(name, values = {}, extra = []) {
  const screen = screens.data.screens[name];
  screens.show(screen, values, extra);
  window.stimlabScreen = name;
  mirror([screen.title, ...screen.paragraphs, ...extra, ...screen.legend.map(([k, a]) => `${k}: ${a}`), screen.prompt]
    .filter(Boolean).map((t) => fillIn(t, values)));
}

function stop(title, detail, log) {
  log?.event("session_stopped", { reason: title, detail });
  log?.flush();
  document.body.classList.remove("presenting");
  if (screens) {
    show("error", { title, detail });
    message.classList.add("error");
  } else {
    message.classList.add("visible", "error");
    mirror([title, detail]);
  }
  setState("stopped");
}

// The canvas is made here, not in the page, and its context is created before it joins the document: no other
// script can have read it with a context of another kind (which would make the float16 context unavailable).
function makeCanvas(data) {
  const canvas = document.createElement("canvas");
  canvas.id = "stimulus";
  canvas.setAttribute("aria-label", "Stimulus display");
  const painter = new Painter(canvas, data);
  root.prepend(canvas);
  painter.centreInWindow();
  // Beyond the canvas (a window larger than the profile's screen) the page shows the background too.
  document.documentElement.style.background = painter.css(data.background.device);
  return painter;
}

async function runChecks(data, painter, log) {
  screens.clear();
  mirror(["Measuring the refresh rate (2 s)…"]);
  const refresh = await measureRefresh(2000);
  const colours = [data.background.device, [0, 0, 0], [painter.dMax, painter.dMax, painter.dMax]];
  if (data.text?.device) colours.push(data.text.device);
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
  screens.clear(); // the self-test drew on the corner pixel
  log.event("checks", checks);
  await send("POST", `/api/sessions/${sessionId}/checks`, checks, { runToken });
  return checks;
}

function checkFailure(data, checks) {
  if (!checks.refresh_agrees) {
    const { refresh } = checks;
    return ["The refresh rate does not match the display profile",
      `Measured ${refresh.refresh_hz.toFixed(2)} Hz (median frame interval ${refresh.median_interval_ms.toFixed(3)} ms); ` +
      `the profile says ${data.display.refresh_hz} Hz. Set the monitor to its calibrated mode, or use its profile.`];
  }
  if (!checks.geometry.screen_matches && !data.dry_run) {
    const [w, h] = checks.geometry.screen_px;
    const [pw, ph] = data.display.size_px;
    return ["This is not the profiled screen",
      `This screen is ${w}×${h} px but the display profile says ${pw}×${ph} px: sizes in degrees and positions would ` +
      "be wrong, and stimuli away from the centre could fall off the screen. Open the runner on the profiled monitor " +
      "at its native resolution with the browser zoom at 100 %, or start a dry run to try the protocol here."];
  }
  if (!checks.colour.passed) {
    const first = checks.colour.mismatches[0];
    return ["The colour pipeline changes the device values",
      `Drew ${first.device.join(", ")} and read back ${first.read.join(", ")} (${checks.colour.mismatches.length} of ` +
      `${checks.colour.tested} differ). Start the browser with --force-color-profile=srgb and turn off any colour ` +
      "management or night-light setting, then reload."];
  }
  return null;
}

function readyNotes(data, checks) {
  const notes = [];
  if (data.dry_run) notes.push(`Dry run: every duration × ${data.dry_run.factor}. Not for analysis.`);
  if (data.audit?.caution) notes.push(`Photosensitivity: ${data.audit.caution}`);
  if (!checks.geometry.screen_matches) {
    const [w, h] = checks.geometry.screen_px;
    const [pw, ph] = data.display.size_px;
    notes.push(`This screen is ${w}×${h} px but the profile says ${pw}×${ph} px: sizes in degrees are only right ` +
      "on the profiled monitor" + (w < pw || h < ph ? ", and the edges of every screen fall outside this one." : "."));
  }
  if (!checks.timers.cross_origin_isolated) notes.push("Timers are coarsened to 100 µs (page not isolated).");
  return notes;
}

async function main() {
  const loaded = await send("GET", `/api/sessions/${sessionId}`);
  if (!loaded.ok) return stop("This session cannot be loaded", loaded.body.error?.message ?? "unknown error");
  const { compiled: data, progress, status } = loaded.body;
  const painter = makeCanvas(data);
  if (status === "complete") return stop("This session is complete", "Start a new session from the Run page.");
  if (status === "ended_early") return stop("This session was ended early", "Start a new session from the Run page.");
  const log = await new SessionLog(sessionId, {
    nextSeq: (progress.last_seq ?? -1) + 1, nextBatch: (progress.last_batch ?? -1) + 1, runToken }).open();
  log.onStatus = (state, result) => {
    root.dataset.link = state;
    if (state === "unreachable") document.getElementById("link-status").hidden = false;
    if (state === "reachable") document.getElementById("link-status").hidden = true;
    // A batch the server refuses is not stored: stop presenting rather than run on with data that cannot be kept.
    if (state === "refused" && window.stimlabState !== "stopped") {
      const schedule = window.stimlabSchedule;
      if (schedule && !schedule.paused) schedule.pause("log_refused");
      if (schedule) schedule.resume = () => {}; // only reopening the page (which resends the log) goes on
      stop("The server refused part of this session's log",
        `${result?.body?.error?.message ?? "no reason given"}. Nothing has been discarded: this browser keeps the ` +
        "log and sends it again when the runner page is reopened. Note this message for whoever looks after stimlab.",
        log);
    }
  };
  window.stimlabLog = log;
  if (!(await takeSession(log, say))) return;
  message.className = "runner-message"; // back to the screen readers' live region
  const resumed = progress.last_seq !== null;
  log.event(resumed ? "resumed" : "session_start", { completed_trials: progress.completed_trials.length,
    last_frame: progress.last_frame, dry_run: data.dry_run ?? null });

  if (!painter.supported) {
    return stop("This browser cannot draw this display's bit depth",
      `The profile is ${data.display.bits}-bit; this browser has no float16 canvas. Use an 8-bit profile of the ` +
      "display, or a current Chromium.", log);
  }
  screens = new Screens(painter, data);
  window.stimlabScreens = screens;
  // Checks first: once the pre-adaptation has begun nothing but the background and the trials is drawn.
  const checks = await runChecks(data, painter, log);
  const failure = checkFailure(data, checks);
  if (failure) return stop(...failure, log);

  const notes = readyNotes(data, checks);
  if (resumed) {
    const total = data.trials.filter((t) => !t.practice).length;
    const done = progress.completed_trials.filter((i) => !data.trials[i]?.practice).length;
    show("resume", { done, total }, [...data.screens.instructions.paragraphs, ...notes]);
  } else {
    show("instructions", {}, notes);
  }
  setState("ready");

  const schedule = new Schedule({ data, painter, log, progress: log.resumeProgress(progress) });
  window.stimlabSchedule = schedule;
  const refreshHz = data.display.refresh_hz;
  const breaks = new Map((data.breaks ?? []).map((b) => [b.before_trial, b]));
  const shownBreaks = new Set();

  const preAdaptation = () => (data.pre_adaptation?.frames > 0
    ? new Countdown(screens, { name: "pre_adaptation", phase: "pre_adapt", frames: data.pre_adaptation.frames,
      refreshHz }) : null);
  const chain = (...parts) => {
    const queue = parts.filter(Boolean);
    return queue.length ? { frame: (stamp) => {
      while (queue.length) {
        const shown = queue[0].frame(stamp);
        if (shown) {
          window.stimlabScreen = queue[0].phase ?? queue[0].brk?.kind ?? "break";
          setState(shown.phase === "break" ? "break" : "running");
          return shown;
        }
        queue.shift();
        if (queue.length === 0) {
          screens.clear();
          window.stimlabScreen = null; // the trials: no screen
        }
      }
      return null;
    }, get current() { return queue[0]; } } : null;
  };

  schedule.beforeTrial = (trial) => {
    const brk = breaks.get(trial.index);
    if (!brk || shownBreaks.has(trial.index) || !schedule.started) return;
    shownBreaks.add(trial.index);
    log.event("break", { before_trial: trial.index, break_kind: brk.kind, done: brk.done, total: brk.total });
    schedule.fullAdapt = true; // after a break the next trial adapts for the full time, as after any interruption
    const pause = new Break(screens, brk, refreshHz);
    mirror([`Break: ${brk.done} of ${brk.total} trials done.`]);
    schedule.interlude = chain(pause, preAdaptation());
  };
  whenDisplaced(log, schedule, (title, detail) => stop(title, detail, log));
  schedule.onFinish = async () => {
    await log.flush();
    show("end");
    document.body.classList.remove("presenting");
    if (document.fullscreenElement) document.exitFullscreen().catch(() => {});
    setState("finished");
  };

  const enterFullscreen = async () => {
    try {
      await document.documentElement.requestFullscreen();
    } catch {
      log.event("fullscreen_refused", {});
    }
  };

  const pause = (reason, extra = []) => {
    if (!["running", "break"].includes(window.stimlabState)) return;
    schedule.pause(reason);
    schedule.interlude = null; // a pre-adaptation or break that was running starts again on resuming
    show("pause", {}, extra);
    setState("paused");
  };

  const endEarly = async (reason) => {
    log.event("ended_early", { reason, t: performance.now() });
    await log.flush();
    const answer = await send("POST", `/api/sessions/${sessionId}/end`, { reason }, { runToken });
    if (!answer.ok) {
      endForm.querySelector(".end-error").textContent = answer.body.error?.message ?? "the server did not answer";
      return;
    }
    endForm.hidden = true;
    schedule.stopped = true;
    show("ended_early");
    document.body.classList.remove("presenting");
    if (document.fullscreenElement) document.exitFullscreen().catch(() => {});
    setState("ended");
  };
  endForm.addEventListener("submit", (event) => {
    event.preventDefault();
    endEarly(endForm.elements.reason.value.trim());
  });
  endForm.addEventListener("reset", () => {
    endForm.hidden = true;
  });

  document.addEventListener("keydown", async (event) => {
    if (event.target instanceof HTMLInputElement || event.target instanceof HTMLButtonElement) return;
    const state = window.stimlabState;
    if (state === "ready" && event.key === " ") {
      event.preventDefault();
      await enterFullscreen();
      document.body.classList.add("presenting");
      screens.clear();
      setState("running");
      schedule.started = true;
      schedule.interlude = chain(preAdaptation());
      schedule.start();
      return;
    }
    if (state === "paused") {
      if (event.key === " ") {
        event.preventDefault();
        document.documentElement.requestFullscreen?.().catch(() => {});
        screens.clear();
        schedule.resume();
        schedule.interlude = chain(preAdaptation());
        setState("running");
      } else if (event.key === "Escape") {
        endForm.hidden = false;
        endForm.elements.reason.focus();
      }
      return;
    }
    if (!["running", "break"].includes(state)) return;
    if (event.key === "Escape") {
      pause("experimenter");
      return;
    }
    const current = schedule.interlude?.current;
    if (current instanceof Break) {
      if (event.key === " ") {
        event.preventDefault();
        if (current.proceed()) log.event("break_end", { before_trial: current.brk.before_trial });
      }
      return;
    }
    if (schedule.interlude) return; // no response keys during the pre-adaptation
    schedule.key(event);
  });
  document.addEventListener("fullscreenchange", () => {
    if (!document.fullscreenElement && ["running", "break"].includes(window.stimlabState)) {
      pause("left_fullscreen", ["Full screen was left."]);
    }
  });
  document.addEventListener("visibilitychange", () => {
    if (document.visibilityState === "hidden") {
      pause("page_hidden");
      log.event("page_hidden", {});
      log.flushOnHide();
    }
  });
}

main();
