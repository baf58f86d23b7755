// The session log: numbered events and frame records, sent in numbered batches once a second.
// Unsent batches live in memory and IndexedDB until the server acknowledges them, so neither a server restart
// nor a closed tab loses anything; the server ignores a batch number it already has, so retries never duplicate.
import { requestOptions, send } from "../api.js";
import { FrameColumns } from "./frames.js";

const KEEPALIVE_LIMIT = 48 * 1024; // fetch keepalive bodies share a 64 KiB budget: stay well under it
export const FLUSH_MS = 1000;

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
    this.onStatus = () => {};
  }

  async open() {
    this.db = await openStore(this.sessionId);
    const saved = await storeOp(this.db, "readonly", (s) => s.getAll());
    for (const body of saved ?? []) {
      this.pending.set(body.batch, body);
      this.batch = Math.max(this.batch, body.batch + 1);
      for (const e of body.events) this.seq = Math.max(this.seq, e.seq + 1);
    }
    this.timer = setInterval(() => this.flush(), FLUSH_MS);
    return this;
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
  }

  cut() {
    if (!this.events.length && !this.frames.length) return null;
    const body = { batch: this.batch++, events: this.events, frames: this.frames.take() };
    this.events = [];
    this.pending.set(body.batch, body);
    storeOp(this.db, "readwrite", (s) => s.put(body));
    return body;
  }

  async flush() {
    this.cut();
    if (this.sending) return;
    this.sending = true;
    try {
      for (const [number, body] of [...this.pending].sort((a, b) => a[0] - b[0])) {
        const result = await send("POST", this.url, body, { runToken: this.runToken });
        if (!result.ok && result.status !== 409) {
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

  // On hiding the page: small keepalive requests that outlive the page; IndexedDB keeps the rest.
  flushOnHide() {
    this.cut();
    let budget = KEEPALIVE_LIMIT;
    for (const body of [...this.pending.values()].sort((a, b) => a.batch - b.batch)) {
      const text = JSON.stringify(body);
      if (text.length > budget) break;
      budget -= text.length;
      fetch(this.url, { ...requestOptions("POST", text, this.runToken), keepalive: true }).catch(() => {});
    }
  }

  // Batches and records not yet acknowledged by the server (0: everything logged so far is stored).
  get backlog() {
    return this.pending.size + this.events.length + this.frames.length;
  }
}
