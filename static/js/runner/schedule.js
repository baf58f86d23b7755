// Frame-locked trials: every phase lasts a whole number of requestAnimationFrame callbacks (no timers), every
// frame is logged, a frame interval of 1.5 refresh periods or more is a dropped frame, and a phase's onset is the
// frame it first appears in.
import { STEPS, stepAt } from "./timecourse.js";
import { Responder, Staircase } from "./responses.js";

// After entering full screen (at the start and on resuming) the runner shows the background alone for this long
// before a trial begins, so that no trial frame is drawn while the browser is still switching modes.
export const SETTLE_S = 0.5;

export class Schedule {
  constructor({ data, painter, log, progress }) {
    this.data = data;
    this.painter = painter;
    this.log = log;
    this.period = 1000 / data.display.refresh_hz;
    // The dropped-frame limit comes with the compiled session (stimlab/experiment/timecourse.py).
    this.droppedLimit = (data.dropped_frame_periods ?? 1.5) * this.period;
    const done = new Set(progress.completed_trials);
    this.queue = data.trials.filter((t) => !done.has(t.index));
    this.frame = progress.last_frame === null ? 0 : progress.last_frame + 1;
    this.dropped = 0;
    this.lastStamp = null;
    this.paused = false;
    this.fullAdapt = true; // the first trial, and the first after any interruption, adapts for the full time
    this.staircases = new Map();
    if (progress.staircase) {
      for (const [condition, state] of Object.entries(progress.staircase)) this.staircases.set(Number(condition), state);
    }
    this.settleFrames = Math.round(SETTLE_S * data.display.refresh_hz);
    this.settleLeft = 0;
    this.onFinish = () => {};
    // Screens between trials (pre-adaptation, breaks: screens.js): { frame() -> { phase, drawn } or null when over }.
    this.interlude = null;
    this.beforeTrial = null; // called with each trial before it starts; may set an interlude
    // Benchmark hooks (?measure=1, ?log_frames=0): callback durations, and frame logging switched off.
    const params = new URLSearchParams(location.search);
    this.durations = params.get("measure") === "1" ? [] : null;
    this.logFrames = params.get("log_frames") !== "0";
    this.testMode = params.get("test") === "frames"; // probe(): the parity test with the reference renderer
  }

  start() {
    this.settle();
    this.nextTrial();
    requestAnimationFrame((t) => this.tick(t));
  }

  settle() {
    this.settleLeft = this.settleFrames;
    this.log.event("settle", { frames: this.settleFrames });
  }

  staircase(condition) {
    const response = this.data.conditions[condition].response;
    if (!this.staircases.has(condition) || !(this.staircases.get(condition) instanceof Staircase)) {
      this.staircases.set(condition, new Staircase(response, this.staircases.get(condition)));
    }
    return this.staircases.get(condition);
  }

  nextTrial() {
    while (this.queue.length) {
      const trial = this.queue[0];
      const condition = this.data.conditions[trial.condition];
      if (condition.response?.kind === "staircase" && this.staircase(trial.condition).done) {
        this.queue.shift(); // this staircase has stopped: its remaining trials are not needed
        continue;
      }
      this.beforeTrial?.(trial);
      const which = trial.practice ? "practice" : this.fullAdapt || trial.schedule === "first" ? "first" : "repeat";
      this.trial = { ...trial, phases: this.data.schedules[which], condition };
      this.phaseIndex = -1;
      this.trialDropped = 0;
      this.fullAdapt = false;
      this.enterPhase(null);
      return true;
    }
    this.trial = null;
    return false;
  }

  enterPhase(stamp) {
    this.phaseIndex += 1;
    this.inPhase = 0;
    this.onsetPending = true;
    const phase = this.phase;
    if (phase?.phase === "respond") {
      this.responder = new Responder(phase.response, this.trial.condition.response, phase);
      if (phase.response === "staircase") this.responder.staircase = this.staircase(this.trial.condition.index);
    } else if (this.phaseIndex === 0) {
      this.responder = null;
    }
    return stamp;
  }

  get phase() {
    return this.trial?.phases[this.phaseIndex];
  }

  key(event) {
    if (!this.trial || this.phase?.phase !== "respond" || !this.responder || this.responder.result) return;
    const record = this.responder.key(event);
    if (!record) return;
    event.preventDefault();
    const { kind, ...data } = record;
    this.log.event(kind, { trial: this.trial.index, phase: "respond", t: event.timeStamp, ...data });
  }

  // The colour of a stimulus this frame, as device levels (or a per-pixel patch description).
  item(name, position) {
    const c = this.trial.condition.stimuli[name];
    const phase = this.phase;
    const course = this.data.plan.courses[phase.courses[position]];
    const step = stepAt(course, this.inPhase, phase.frames);
    const g = { ...c.geometry };
    const response = this.trial.condition.response;
    const target = response && response.target === name;
    if (this.trial.target_side && target) {
      g.position_px = [(this.trial.target_side === "left" ? -1 : 1) * Math.abs(g.position_px[0]), g.position_px[1]];
    }
    const item = { geometry: g, device: c.colour.device, second: c.second_colour?.device };
    const perPixel = g.shape === "gaussian" || g.shape === "grating";
    if (target && response.kind === "adjustment" && phase.phase === "respond" && this.responder) {
      // A flickering adjusted target (flicker photometry) alternates with its opposite about the background.
      item.device = step < 0 && response.device_opposite ? response.device_opposite[this.responder.index()]
        : this.responder.device();
    } else if (target && response.kind === "staircase") {
      const index = this.staircase(this.trial.condition.index).index;
      item.device = response.device[index];
      if (perPixel) {
        item.patch = { key: `${name}|s${this.trial.condition.index}|${index}|${step}`,
          profile: this.data.plan.patches[name], step, table: response.device, ladderPosition: index };
      }
      return item;
    }
    const table = c.colour.modulation_table;
    if (perPixel) {
      item.patch = { key: `${name}|${this.trial.condition.index}|${step}`, profile: this.data.plan.patches[name],
        step, table };
    } else if (table && step !== STEPS) {
      item.device = table[step + STEPS];
      if (c.second_colour?.modulation_table) item.second = c.second_colour.modulation_table[step + STEPS];
    }
    return item;
  }

  // Test mode only (?test=frames): draw one frame of the plan without running the loop and read back the device
  // levels at the pixels columns × rows, for comparison with stimlab/experiment/render.py.
  probe(trialIndex, phaseIndex, frame, columns, rows, ladder = null) {
    if (!this.testMode) throw new Error("probe() needs ?test=frames");
    const trial = this.data.trials[trialIndex];
    const which = trialIndex === 0 || trial.schedule === "first" ? "first" : "repeat";
    this.trial = { ...trial, phases: this.data.schedules[which], condition: this.data.conditions[trial.condition] };
    this.phaseIndex = phaseIndex;
    this.inPhase = frame;
    const phase = this.phase;
    this.responder = null;
    if (phase.phase === "respond") {
      this.responder = new Responder(phase.response, this.trial.condition.response, phase);
      if (phase.response === "staircase") this.responder.staircase = this.staircase(this.trial.condition.index);
      this.responder.begin(this.trial, 0);
      if (ladder !== null && this.responder.position) this.responder.position = [ladder];
    }
    const items = phase.stimuli.map((name, i) => this.item(name, i));
    this.painter.draw({ background: this.data.background.device, items,
      fixation: phase.fixation !== false && this.data.fixation ? this.data.fixation : null });
    return this.painter.read(columns, rows);
  }

  tick(stamp) {
    if (this.stopped) return; // ended early: no more frames
    const callbackStart = performance.now();
    const dropped = this.lastStamp !== null && stamp - this.lastStamp >= this.droppedLimit;
    this.lastStamp = stamp;
    if (dropped) {
      this.dropped += 1;
      if (!this.paused && this.settleLeft === 0 && !this.interlude) this.trialDropped += 1;
    }
    if (this.paused) {
      this.log.frame(this.frame++, stamp, callbackStart, null, "pause", dropped);
      requestAnimationFrame((t) => this.tick(t));
      return;
    }
    if (this.settleLeft > 0) {
      this.settleLeft -= 1;
      this.painter.draw({ background: this.data.background.device, items: [], fixation: null });
      this.log.frame(this.frame++, stamp, callbackStart, null, "settle", dropped, this.data.background.device.join(","));
      requestAnimationFrame((t) => this.tick(t));
      return;
    }
    if (this.interlude && this.playInterlude(stamp, callbackStart, dropped)) return;
    this.advance(stamp);
    if (this.interlude && this.playInterlude(stamp, callbackStart, dropped)) return;
    if (!this.trial) {
      this.log.event("session_end", { t: stamp, frames: this.frame, dropped_frames: this.dropped });
      this.onFinish();
      return;
    }
    const phase = this.phase;
    if (this.onsetPending) {
      this.onsetPending = false;
      this.log.event("phase_onset", { trial: this.trial.index, phase: phase.phase, t: stamp, frame: this.frame,
        condition: this.trial.condition.index, practice: Boolean(this.trial.practice) });
      if (phase.phase === "respond") this.responder?.begin(this.trial, stamp);
    }
    const items = phase.stimuli.map((name, i) => this.item(name, i));
    const showFixation = phase.fixation !== false && this.data.fixation;
    this.painter.draw({ background: this.data.background.device, items,
      fixation: showFixation ? this.data.fixation : null });
    if (this.logFrames) {
      const drawn = items.map((i) => (i.device ? i.device.join(",") : "patch")).join(";");
      this.log.frame(this.frame, stamp, callbackStart, this.trial.index, phase.phase, dropped, drawn, this.inPhase);
    }
    this.frame += 1;
    this.inPhase += 1;
    if (this.durations) this.durations.push(performance.now() - callbackStart);
    requestAnimationFrame((t) => this.tick(t));
  }

  playInterlude(stamp, callbackStart, dropped) {
    const shown = this.interlude.frame(stamp);
    if (!shown) {
      this.interlude = null;
      return false;
    }
    if (this.logFrames) this.log.frame(this.frame, stamp, callbackStart, null, shown.phase, dropped, shown.drawn);
    this.frame += 1;
    requestAnimationFrame((t) => this.tick(t));
    return true;
  }

  // Move to the next phase or trial when the current one has run its frames or has its response.
  advance(stamp) {
    while (this.trial) {
      const phase = this.phase;
      if (!phase) {
        this.endTrial(stamp);
        if (!this.nextTrial()) return;
        continue;
      }
      if (phase.phase === "respond") {
        const answered = this.responder?.result;
        const timedOut = phase.timeout_frames && this.inPhase >= phase.timeout_frames;
        if (!answered && !timedOut) return;
        if (timedOut && !answered) {
          this.log.event("timeout", { trial: this.trial.index, phase: "respond", t: stamp });
        }
      } else if (this.inPhase < phase.frames) {
        return;
      }
      this.enterPhase(stamp);
    }
  }

  endTrial(stamp) {
    const result = this.responder?.result ?? null;
    const fields = { trial: this.trial.index, t: stamp, condition: this.trial.condition.index,
      response: result, dropped_frames: this.trialDropped, practice: Boolean(this.trial.practice) };
    if (this.trial.condition.response?.kind === "staircase" && result && !this.trial.practice) {
      const staircase = this.staircase(this.trial.condition.index);
      fields.staircase_value = staircase.state().value;
      const state = staircase.update(result.correct);
      const all = Object.fromEntries([...this.staircases].map(([k, v]) => [k, v.state ? v.state() : v]));
      this.log.event("staircase", { trial: this.trial.index, t: stamp, ...all, [this.trial.condition.index]: state });
    }
    this.log.event("trial_end", fields);
    this.queue.shift();
  }

  pause(reason) {
    if (this.paused) return;
    this.paused = true;
    if (this.trial && !this.interlude) {
      this.log.event("trial_aborted", { trial: this.trial.index, reason, t: performance.now() });
      this.fullAdapt = true;
      this.nextTrialOnResume = true;
    }
    this.log.event("paused", { reason, t: performance.now() });
  }

  resume() {
    if (!this.paused) return;
    this.paused = false;
    this.log.event("resumed", { t: performance.now() });
    this.settle();
    if (this.nextTrialOnResume) {
      this.nextTrialOnResume = false;
      this.fullAdapt = true;
      this.nextTrial(); // the aborted trial is still first in the queue: it runs again, fully adapted
    }
  }
}
