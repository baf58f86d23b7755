// Keys to responses: adjustment along an axis or in a plane (fine and coarse steps), 2AFC, yes/no, the
// after-image-gone key, and the staircase rule. Positions are indices into the compiled ladder, so the device
// levels shown are exactly the server's. Only the keys compiled into the respond phase act (keys, confirm, the
// coarse-step modifier and the move of each key, defaults filled in by the compiler); every other key is ignored.

export class Responder {
  constructor(method, response, phaseSpec) {
    this.method = method;
    this.response = response; // compiled adjustment/staircase (null for the others)
    this.keys = phaseSpec?.keys;
    this.confirm = phaseSpec?.confirm ?? [];
    this.coarse = phaseSpec?.coarse ?? null;
    this.moves = phaseSpec?.moves ?? {};
  }

  begin(trial, onsetStamp) {
    this.trial = trial;
    this.onset = onsetStamp;
    this.result = null;
    if (this.method === "adjustment") {
      const start = trial.start ?? Math.floor(this.response.positions.count / 2);
      this.position = Array.isArray(start) ? [...start] : [start];
    }
  }

  index() {
    const count = this.response.positions.count;
    return this.position.length === 1 ? this.position[0] : this.position[0] * count + this.position[1];
  }

  value() {
    const { low, step } = this.response.positions;
    return this.position.map((p) => low + p * step);
  }

  device() {
    return this.response.device[this.index()];
  }

  // Returns an event to log, or null. Sets this.result when the trial's response is complete.
  key(event) {
    const rt = event.timeStamp - this.onset;
    const k = event.key;
    if (this.method === "adjustment") return this.adjust(event, rt);
    if (this.method === "duration") {
      if (k !== (this.keys?.[0] ?? " ")) return null;
      this.result = { method: "duration", key: k, rt_ms: rt };
      return { kind: "response", ...this.result };
    }
    const [first, second] = this.keys ?? (this.method === "yes_no" ? ["y", "n"] : ["ArrowLeft", "ArrowRight"]);
    if (k !== first && k !== second) return null;
    const task = this.method === "staircase" ? this.response.task : this.method;
    let correct;
    if (task === "2afc") correct = (k === first ? "left" : "right") === this.trial.target_side;
    else correct = k === first;
    this.result = { method: this.method, key: k, choice: k === first ? 0 : 1, correct, rt_ms: rt };
    return { kind: "response", ...this.result };
  }

  adjust(event, rt) {
    const k = event.key;
    if (this.confirm.includes(k)) {
      this.result = { method: "adjustment", key: k, position_index: this.position.length === 1 ? this.position[0]
        : [...this.position], position: this.value(), device: this.device(), rt_ms: rt };
      return { kind: "response", ...this.result };
    }
    // Shift turns a letter key's name upper case: a coarse step on "f" arrives as "F".
    const name = Object.hasOwn(this.moves, k) ? k : this.coarse === "Shift" && k.length === 1 ? k.toLowerCase() : null;
    if (name === null || !Object.hasOwn(this.moves, name)) return null;
    const [axis, sign] = this.moves[name];
    const coarse = this.coarse !== null && event.getModifierState(this.coarse);
    const size = coarse ? this.response.coarse_step_positions : 1;
    const before = [...this.position];
    const limit = this.response.positions.count - 1;
    this.position[axis] = Math.max(0, Math.min(limit, this.position[axis] + sign * size));
    if (this.device() === null) {
      this.position = before; // the display cannot show it: stay, and say so in the log
      return { kind: "gamut_edge", position_index: [...this.position] };
    }
    return { kind: "adjust", position_index: [...this.position], position: this.value(), device: this.device(),
      coarse };
  }
}

// The up/down staircase on ladder indices; one state per condition.
export class Staircase {
  constructor(response, saved) {
    this.response = response;
    Object.assign(this, saved ?? { index: response.start_position, run: 0, wrong: 0, direction: 0, reversals: 0,
      trials: 0, done: false });
  }

  update(correct) {
    const { rule, step_positions: steps, positions, stop_reversals: stop, max_trials: max } = this.response;
    const size = steps[Math.min(this.reversals, steps.length - 1)];
    let move = 0;
    if (correct) {
      this.run += 1;
      this.wrong = 0;
      if (this.run >= rule.down) { move = -1; this.run = 0; }
    } else {
      this.wrong += 1;
      this.run = 0;
      if (this.wrong >= rule.up) { move = 1; this.wrong = 0; }
    }
    if (move !== 0) {
      if (this.direction !== 0 && move !== this.direction) this.reversals += 1;
      this.direction = move;
      this.index = Math.max(0, Math.min(positions.count - 1, this.index + move * size));
    }
    this.trials += 1;
    this.done = this.reversals >= stop || this.trials >= max;
    return this.state();
  }

  state() {
    const { index, run, wrong, direction, reversals, trials, done } = this;
    return { index, run, wrong, direction, reversals, trials, done,
      value: this.response.positions.low + index * this.response.positions.step };
  }
}
