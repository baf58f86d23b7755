// The screens around the trials, drawn on the canvas: the protocol's background at its compiled device levels and a
// text panel in the compiled text colour. Nothing here chooses a colour or a word: both come from the compiled
// session (data.background, data.text, data.screens); this module only lays the lines out and fills in
// {done}, {total}, {seconds}, {title} and {detail}.

const LINE = 1.45; // line height in font sizes
const MIN_SIZE = 12; // smallest type, device pixels

function fill(text, values) {
  return text.replace(/\{(\w+)\}/g, (whole, name) => (name in values ? String(values[name]) : whole));
}

export class Screens {
  constructor(painter, data) {
    this.painter = painter;
    this.data = data;
    this.background = data.background.device;
    this.text = data.text?.device ?? null;
    const [width, height] = data.display.size_px;
    this.width = width;
    this.height = height;
    // About 0.6° per font size at the viewing distance, kept between 18 and 40 device pixels.
    this.baseSize = Math.round(Math.min(40, Math.max(18, 0.7 * (data.pixels_per_degree ?? 30))));
    this.size = this.baseSize;
    this.drawn = this.background.join(",");
  }

  font(weight = "normal") {
    return `${weight} ${this.size}px system-ui, "DejaVu Sans", sans-serif`;
  }

  wrap(ctx, text, maxWidth) {
    const lines = [];
    for (const paragraph of text.split("\n")) {
      let line = "";
      for (const word of paragraph.split(/\s+/).filter(Boolean)) {
        const trial = line ? `${line} ${word}` : word;
        if (line && ctx.measureText(trial).width > maxWidth) {
          lines.push(line);
          line = word;
        } else {
          line = trial;
        }
      }
      lines.push(line);
    }
    return lines;
  }

  // The background alone.
  clear() {
    const ctx = this.painter.ctx;
    ctx.fillStyle = this.painter.css(this.background);
    ctx.fillRect(0, 0, this.width, this.height);
    this.panel = null;
  }

  // A screen from data.screens (or one given directly): title and paragraphs above the centre, the key legend and
  // the prompt below it. Returns the frame-log description of what was drawn.
  show(nameOrScreen, values = {}, extra = []) {
    const screen = typeof nameOrScreen === "string" ? this.data.screens[nameOrScreen] : nameOrScreen;
    this.clear();
    if (!screen || !this.text) return this.drawn;
    // A window smaller than the profile's screen shows only its middle: smaller type until the text fits in view.
    const [, visibleHeight] = this.painter.visible();
    const [top, bottom] = [(this.height - visibleHeight) / 2, (this.height + visibleHeight) / 2];
    for (this.size = this.baseSize; ; this.size = Math.max(MIN_SIZE, Math.floor(0.85 * this.size))) {
      this.layout(screen, values, extra);
      if ((this.panel.top >= top && this.panel.bottom <= bottom) || this.size === MIN_SIZE) break;
      this.clear();
    }
    return `${this.drawn};text ${this.text.join(",")}`;
  }

  // Draw one screen's lines at the current type size and keep the panel they cover.
  layout(screen, values, extra) {
    const ctx = this.painter.ctx;
    const gap = 2 * this.size; // the centre stays clear of text: it is where the participant looks
    const maxWidth = Math.min(0.7 * this.painter.visible()[0], 34 * this.size); // lines fit the part in view
    const step = LINE * this.size;
    ctx.fillStyle = this.painter.css(this.text);
    ctx.textBaseline = "middle";
    ctx.textAlign = "center";
    const x = this.width / 2;
    const cy = this.height / 2;

    ctx.font = this.font();
    const above = [];
    if (screen.title) above.push({ text: fill(screen.title, values), bold: true, space: 0.6 });
    for (const p of [...screen.paragraphs, ...extra]) {
      const lines = this.wrap(ctx, fill(p, values), maxWidth);
      lines.forEach((line, i) => above.push({ text: line, space: i === lines.length - 1 ? 0.4 : 0 }));
    }
    let y = cy - gap - above.reduce((sum, l) => sum + step + l.space * this.size, 0) + step / 2;
    const top = y - step / 2;
    for (const line of above) {
      ctx.font = this.font(line.bold ? "bold" : "normal");
      ctx.fillText(line.text, x, y);
      y += step + line.space * this.size;
    }

    y = cy + gap + step / 2;
    const legend = screen.legend ?? [];
    if (legend.length) {
      ctx.font = this.font("bold");
      const keyWidth = Math.max(...legend.map(([k]) => ctx.measureText(k).width));
      ctx.font = this.font();
      // Actions wrap beside their keys when the part of the screen in view is narrow.
      const actions = legend.map(([, a]) => this.wrap(ctx, a, Math.max(maxWidth - keyWidth - this.size, 8 * this.size)));
      const actionWidth = Math.max(...actions.flat().map((line) => ctx.measureText(line).width));
      const left = x - (keyWidth + this.size + actionWidth) / 2;
      legend.forEach(([keys], i) => {
        ctx.textAlign = "right";
        ctx.font = this.font("bold");
        ctx.fillText(keys, left + keyWidth, y);
        ctx.textAlign = "left";
        ctx.font = this.font();
        for (const line of actions[i]) {
          ctx.fillText(line, left + keyWidth + this.size, y);
          y += step;
        }
      });
      ctx.textAlign = "center";
      y += 0.6 * this.size;
    }
    if (screen.prompt) {
      ctx.font = this.font();
      for (const line of this.wrap(ctx, fill(screen.prompt, values), maxWidth)) {
        ctx.fillText(line, x, y);
        y += step;
      }
    }
    this.panel = { left: x - maxWidth / 2, right: x + maxWidth / 2, top, bottom: y };
  }
}

// A screen shown for a fixed number of frames, redrawn when its countdown changes; logged under its own phase.
export class Countdown {
  constructor(screens, { name, phase, frames, refreshHz, values = {} }) {
    Object.assign(this, { screens, name, phase, frames, refreshHz, values });
    this.left = frames;
    this.shownSeconds = null;
  }

  frame() {
    if (this.left <= 0) return null;
    const seconds = Math.ceil(this.left / this.refreshHz);
    if (seconds !== this.shownSeconds) {
      this.shownSeconds = seconds;
      this.drawn = this.screens.show(this.name, { ...this.values, seconds });
      // The protocol's own fixation mark (compiled and audited with the stimuli) shows where to look.
      const fixation = this.screens.data.fixation;
      if (fixation) {
        this.screens.painter.fixation(fixation);
        this.drawn += `;fixation ${fixation.device.join(",")}`;
      }
    }
    this.left -= 1;
    return { phase: this.phase, drawn: this.drawn };
  }
}

// A break: at least its minimum frames with a countdown, then its screen until the participant goes on.
export class Break {
  constructor(screens, brk, refreshHz) {
    this.screens = screens;
    this.brk = brk;
    const values = { done: brk.done, total: brk.total };
    const extra = brk.instructions ? [brk.instructions] : [];
    this.wait = brk.minimum_frames > 0 ? { left: brk.minimum_frames, refreshHz, shownSeconds: null } : null;
    this.values = values;
    this.extra = extra;
    this.ready = false;
    this.done = false;
  }

  frame() {
    if (this.done) return null;
    if (this.wait && this.wait.left > 0) {
      const seconds = Math.ceil(this.wait.left / this.wait.refreshHz);
      if (seconds !== this.wait.shownSeconds) {
        this.wait.shownSeconds = seconds;
        this.drawn = this.screens.show("break_wait", { ...this.values, seconds }, this.extra);
      }
      this.wait.left -= 1;
      return { phase: "break", drawn: this.drawn };
    }
    if (!this.ready) {
      this.ready = true;
      const name = this.brk.kind === "after_practice" ? "after_practice" : "break";
      this.drawn = this.screens.show(name, this.values, this.extra);
    }
    return { phase: "break", drawn: this.drawn };
  }

  // Space: go on, once the minimum has passed.
  proceed() {
    if (!this.ready) return false;
    this.done = true;
    return true;
  }
}
