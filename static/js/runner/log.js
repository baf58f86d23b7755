// The session log: numbered events and frame records, sent in numbered batches once a second.
// Unsent batches live in memory and IndexedDB until the server acknowledges them, so neither a server restart
// nor a closed tab loses anything; the server ignores a batch number it already has, so retries never duplicate.
// One runner writes a session at a time: the page takes the session's lease on start or resume; a runner whose
// lease another tab took stops and keeps its unsent batches here (the other tab sends them when it opens).
import { requestOptions, send } from "../api.js";
import { FrameColumns } from "./frames.js";

const KEEPALIVE_LIMIT = 48 * 1024; // fetch keepalive bodies share a 64 KiB budget: stay well under it
export const FLUSH_MS = 1000;
const HEARTBEAT_MS = 2000; // with nothing to send, still tell the server this runner holds the session

function openStore(sessionId) {
  return new Promise((resolve) => {
    if (!("indexedDB" in self)) return resolve(null);
    const request = indexedDB.open(`stimlab-session-${sessionId}`, 1);
    request.onupgradeneeded = () => request.result.createObjectStore("batches", { keyPath: "batch" });
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => resolve(null);
  });
}

function storeOp(db, mode, action) {
  return new Promise((resolve) => {
    if (!db) return resolve(null);
    const tx = db.transaction("batches", mode);
    const result = action(tx.objectStore("batches"));
    tx.oncomplete = () => resolve(result?.result ?? null);
    tx.onerror = () => resolve(null);
  });
}

export class SessionLog {
  constructor(sessionId, { nextSeq = 0, nextBatch = 0, runToken = null } = {}) {
    this.url = `/api/sessions/${sessionId}/batches`;
    this.runToken = runToken;
    this.sessionId = sessionId;
    this.seq = nextSeq;
    this.batch = nextBatch;
    this.events = [];
    this.frames = new FrameColumns();
    this.pending = new Map(); // batch number -> body, until acknowledged
    this.sending = false;
    this.unreachable = false;
    this.displaced = false;
    this.lastFrame = null; // the highest frame number logged here or in a saved unsent batch
    this.runner = self.crypto?.randomUUID?.() ?? `runner-${Date.now()}-${Math.random().toString(36).slice(2)}`;
    this.onStatus = () => {};
  }

  async open() {
    this.db = await openStore(this.sessionId);
    const saved = await storeOp(this.db, "readonly", (s) => s.getAll());
    for (const { last_frame: lastFrame = null, ...body } of saved ?? []) {
      this.pending.set(body.batch, body);
      this.batch = Math.max(this.batch, body.batch + 1);
      for (const e of body.events) this.seq = Math.max(this.seq, e.seq + 1);
      if (lastFrame !== null) this.lastFrame = Math.max(this.lastFrame ?? -1, lastFrame);
    }
    this.timer = setInterval(() => this.flush(), FLUSH_MS);
    // A closing page gives the session up at once, so reopening it in a new tab needs no take-over.
    addEventListener("pagehide", () => {
      if (!this.held || this.displaced) return;
      const options = requestOptions("POST", JSON.stringify({ runner: this.runner, release: true }), this.runToken);
      fetch(`/api/sessions/${this.sessionId}/lease`, { ...options, keepalive: true }).catch(() => {});
    });
    return this;
  }

  // The server's progress, with the frames of saved unsent batches counted, so a resumed schedule numbers its
  // frames after them and never twice.
  resumeProgress(progress) {
    if (this.lastFrame === null || (progress.last_frame ?? -1) >= this.lastFrame) return progress;
    return { ...progress, last_frame: this.lastFrame };
  }

  // Take the session's lease: {ok: true} or {ok: false, message} when the session is open in another tab or window.
  async claim(takeOver = false) {
    const result = await send("POST", `/api/sessions/${this.sessionId}/lease`,
      { runner: this.runner, take_over: takeOver }, { runToken: this.runToken });
    if (result.ok) {
      this.displaced = false;
      this.held = true;
      this.lastContact = performance.now();
    }
    return { ok: result.ok, status: result.status, message: result.body?.error?.message ?? "" };
  }

  async post(body) {
    const options = requestOptions("POST", JSON.stringify(body), this.runToken);
    options.headers["X-Runner-Id"] = this.runner;
    try {
      const response = await fetch(this.url, options);
      let data = null;
      try { data = await response.json(); } catch { data = null; }
      return { ok: response.ok, status: response.status, body: data };
    } catch {
      return { ok: false, status: 0, body: null };
    }
  }

  event(kind, fields = {}) {
    const { trial = null, phase = null, t = performance.now(), ...data } = fields;
    const record = { seq: this.seq++, t, kind, trial, phase, data };
    this.events.push(record);
    return record;
  }

  // One frame: its number, rAF timestamp, performance.now() at the callback's start, trial, phase, dropped, drawn.
  frame(number, tRaf, tCallback, trial, phase, dropped, drawn = null, inPhase = -1) {
    this.frames.push(number, tRaf, tCallback, trial, phase, dropped, drawn, inPhase);
    this.lastFrame = Math.max(this.lastFrame ?? -1, number);
  }

  cut() {
    if (!this.events.length && !this.frames.length) return null;
    const body = { batch: this.batch++, events: this.events, frames: this.frames.take() };
    this.events = [];
    this.pending.set(body.batch, body);
    storeOp(this.db, "readwrite", (s) => s.put({ ...body, last_frame: this.lastFrame }));
    return body;
  }

  async flush() {
    this.cut();
    if (this.sending || this.displaced) return;
    this.sending = true;
    try {
      if (this.held && !this.pending.size && performance.now() - this.lastContact > HEARTBEAT_MS) {
        const beat = await this.claim(false);
        if (beat.status === 409) this.displace(beat);
      }
      for (const [number, body] of [...this.pending].sort((a, b) => a[0] - b[0])) {
        const result = await this.post(body);
        const field = result.body?.error?.field;
        if (result.status === 409 && field === "runner") {
          this.displace(result);
          break;
        }
        if (result.ok) this.lastContact = performance.now();
        // A 409 for a complete session means the batch is no longer wanted; any other refusal keeps the batch.
        if (!result.ok && !(result.status === 409 && field === "status")) {
          this.unreachable = result.status === 0 || result.status >= 500;
          this.onStatus(this.unreachable ? "unreachable" : "refused", result);
          break; // keep it and every later batch; retry on the next tick
        }
        this.pending.delete(number);
        storeOp(this.db, "readwrite", (s) => s.delete(number));
        if (this.unreachable) this.onStatus("reachable");
        this.unreachable = false;
      }
    } finally {
      this.sending = false;
    }
  }

  // Another tab took the session: stop sending; everything unsent stays here and in IndexedDB.
  displace(result) {
    this.displaced = true;
    clearInterval(this.timer);
    this.onStatus("displaced", result);
    this.onDisplaced?.(result);
  }

  // On hiding the page: small keepalive requests that outlive the page; IndexedDB keeps the rest.
  flushOnHide() {
    this.cut();
    if (this.displaced) return;
    let budget = KEEPALIVE_LIMIT;
    for (const body of [...this.pending.values()].sort((a, b) => a.batch - b.batch)) {
      const text = JSON.stringify(body);
      if (text.length > budget) break;
      budget -= text.length;
      const options = requestOptions("POST", text, this.runToken);
      options.headers["X-Runner-Id"] = this.runner;
      fetch(this.url, { ...options, keepalive: true }).catch(() => {});
    }
  }

  // Batches and records not yet acknowledged by the server (0: everything logged so far is stored).
  get backlog() {
    return this.pending.size + this.events.length + this.frames.length;
  }
}
