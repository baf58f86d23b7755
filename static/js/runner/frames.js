// The per-frame log between two batches, in preallocated typed columns: logging a frame writes eight numbers and
// allocates nothing, so the log adds no garbage-collection pauses to the frame loop. A batch sends the columns
// packed (base64 of their little-endian bytes, text as indices into the block's labels), as read by
// stimlab/sessions/frame_log.py. in_phase is the frame's index within its phase (-1 outside trials): with the
// trial, the phase and the compiled plan it says exactly what was on screen.
export const COLUMNS = ["frame", "t_raf", "t_callback", "trial", "phase", "dropped", "drawn", "in_phase"];
const TYPES = { frame: Uint32Array, t_raf: Float64Array, t_callback: Float64Array, trial: Int32Array,
  phase: Uint16Array, dropped: Uint8Array, drawn: Uint16Array, in_phase: Int32Array };
const NO_LABEL = 65535;
// Typed arrays use the platform's byte order, little-endian wherever browsers run; the packed form says so.
if (new Uint8Array(new Uint16Array([1]).buffer)[0] !== 1) throw new Error("the frame log needs a little-endian platform");

const toBase64 = Uint8Array.prototype.toBase64
  ? (bytes) => bytes.toBase64()
  : (bytes) => {
    let text = "";
    for (let i = 0; i < bytes.length; i += 0x8000) text += String.fromCharCode.apply(null, bytes.subarray(i, i + 0x8000));
    return btoa(text);
  };

export class FrameColumns {
  constructor(capacity = 512) {
    this.count = 0;
    this.labels = [];
    this.codes = new Map();
    this.columns = Object.fromEntries(COLUMNS.map((name) => [name, new TYPES[name](capacity)]));
  }

  get length() {
    return this.count;
  }

  label(text) {
    if (text === null || text === undefined) return NO_LABEL;
    let code = this.codes.get(text);
    if (code === undefined) {
      code = this.labels.length;
      this.labels.push(text);
      this.codes.set(text, code);
    }
    return code;
  }

  push(frame, tRaf, tCallback, trial, phase, dropped, drawn, inPhase = -1) {
    const c = this.columns;
    if (this.count === c.frame.length) this.grow();
    const i = this.count++;
    c.frame[i] = frame;
    c.t_raf[i] = tRaf;
    c.t_callback[i] = tCallback;
    c.trial[i] = trial ?? -1;
    c.phase[i] = this.label(phase);
    c.dropped[i] = dropped ? 1 : 0;
    c.drawn[i] = this.label(drawn);
    c.in_phase[i] = inPhase ?? -1;
  }

  grow() {
    for (const name of COLUMNS) {
      const bigger = new TYPES[name](this.columns[name].length * 2);
      bigger.set(this.columns[name]);
      this.columns[name] = bigger;
    }
  }

  // The frames so far as one packed block (or null if none), and an empty log for the next batch.
  take() {
    if (!this.count) return null;
    const block = { count: this.count, labels: this.labels };
    for (const name of COLUMNS) {
      const values = this.columns[name].subarray(0, this.count);
      block[name] = toBase64(new Uint8Array(values.buffer, 0, values.byteLength));
    }
    this.count = 0;
    this.labels = [];
    this.codes = new Map();
    return block;
  }
}
