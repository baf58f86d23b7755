// The protocol editor: form inputs named by JSON path, structural edits made by the server, a debounced live
// audit, inline errors, save. Unsaved edits are kept in this browser (localStorage) until saved, so neither a
// reload nor a save refused because the file changed on disk loses them.
import { postJSON, putJSON, send } from "./api.js";
import { changes, formatPath, mergeInto, sameValue, setAt } from "./json_path.js";

const editor = document.getElementById("editor");
const form = document.getElementById("protocol-form");
const panel = document.getElementById("audit-panel");
const jsonBox = document.getElementById("protocol-json");
const saveButton = document.getElementById("save");
const saveStatus = document.getElementById("save-status");
const displayChoice = document.getElementById("audit-display");
const conflictBox = document.getElementById("conflict");
const name = editor.dataset.name;
const draftKey = `stimlab.protocol-draft.${name}`;

let protocol = JSON.parse(document.getElementById("protocol-data").textContent);
let baseProtocol = structuredClone(protocol); // the version on disk these edits started from
let baseSha = editor.dataset.sha256;
let timer = null;
let generation = 0;

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
const LARGEST = "1.8 × 10³⁰⁸"; // the largest number JSON's doubles hold

// A number field's text: a real minus sign (−) reads as "-", as it is shown on the pages.
const numberText = (input) => input.value.trim().replace(/\u2212/g, "-");

function readInput(input) {
  if (input.dataset.kind === "boolean") return input.checked;
  if (input.dataset.kind === "number") {
    const text = numberText(input);
    if (text === "") return null;
    const value = Number(text);
    return NUMBER.test(text) && Number.isFinite(value) ? value : input.value;
  }
  return input.value;
}

function labelOf(input) {
  const label = input.id ? form.querySelector(`label[for="${CSS.escape(input.id)}"]`) : null;
  return (label?.textContent ?? input.getAttribute("aria-label") ?? input.name).trim();
}

// What is wrong with a number field as typed, in words, or null: found here, since the protocol can only hold
// the field as empty (null) or as the text typed, and the server would then answer "must be a number, not null".
function numberProblem(input) {
  if (input.dataset.kind !== "number") return null;
  const text = numberText(input);
  if (text === "") return `${labelOf(input)} is empty: enter a number`;
  if (!NUMBER.test(text)) return `${labelOf(input)}: "${input.value.trim().slice(0, 40)}" is not a number; enter a number such as 0.25 or −1.5`;
  if (!Number.isFinite(Number(text))) return `${labelOf(input)}: ${text.slice(0, 40)} is too large (at most ${LARGEST} in size)`;
  return null;
}

function firstNumberProblem() {
  for (const input of form.querySelectorAll('input[data-kind="number"]')) {
    const problem = numberProblem(input);
    if (problem) return { field: input.name, message: problem };
  }
  return null;
}

// -- the draft kept in this browser -----------------------------------------------------------------------------
function keepDraft() {
  try {
    localStorage.setItem(draftKey, JSON.stringify({ protocol, base: baseProtocol, base_sha256: baseSha,
      kept_at: new Date().toISOString() }));
  } catch { /* storage full or disabled: the page still holds the edits */ }
}

function dropDraft() {
  try { localStorage.removeItem(draftKey); } catch { /* nothing kept */ }
}

function readDraft() {
  try { return JSON.parse(localStorage.getItem(draftKey) ?? "null"); } catch { return null; }
}

function changed() {
  syncJson();
  keepDraft();
  saveStatus.textContent = "Unsaved changes (kept in this browser until saved)";
}

// -- errors ------------------------------------------------------------------------------------------------------
function clearErrors() {
  for (const field of form.querySelectorAll(".invalid")) {
    field.classList.remove("invalid");
    const message = field.querySelector(":scope > .message");
    if (message) message.textContent = "";
  }
  for (const input of form.querySelectorAll("[aria-invalid]")) input.removeAttribute("aria-invalid");
}

// The closest part of the form that holds `field` (a fieldset or a vector), or null. Each step drops the last key
// or index; a path that no longer shrinks (a top-level key, "(top level)") ends the search.
function enclosingPart(field) {
  let path = field;
  while (path) {
    const part = form.querySelector(`[data-path="${CSS.escape(path)}"]`);
    if (part) return part;
    const shorter = path.replace(/(\.[^.[\]]+|\[\d+\])$/, "");
    if (shorter === path) return null;
    path = shorter;
  }
  return null;
}

function showError(error) {
  clearErrors();
  const field = error.field ?? "";
  const text = error.message ?? "invalid";
  // The input itself, else the closest enclosing part of the form (a fieldset or a vector).
  const target = field ? form.querySelector(`[name="${CSS.escape(field)}"]`) : null;
  const holder = target?.closest(".field") ?? enclosingPart(field);
  if (target) target.setAttribute("aria-invalid", "true");
  if (holder) {
    holder.classList.add("invalid");
    const message = holder.querySelector(":scope > .message");
    if (message) message.textContent = text;
  }
  panel.innerHTML = "";
  const note = document.createElement("p");
  note.className = "verdict fail";
  note.id = "audit-verdict";
  note.textContent = text; // already names the field by its label
  if (field) note.title = `JSON path: ${field}`;
  panel.append(note);
}

// -- audit -------------------------------------------------------------------------------------------------------
async function audit() {
  const mine = ++generation;
  const result = await postJSON("/api/audit", { protocol, display: displayChoice?.value || null });
  if (mine !== generation) return; // a newer edit is already being audited
  if (result.ok) {
    clearErrors();
    panel.innerHTML = result.body.html;
  } else {
    showError(result.body.error ?? {});
  }
}

function scheduleAudit() {
  clearTimeout(timer);
  timer = setTimeout(audit, 300);
}

function syncJson() {
  jsonBox.value = JSON.stringify(protocol, null, 2);
}

// The server draws the form for a protocol (after an edit, or for JSON typed in the box) and says what is wrong.
async function redraw(body) {
  const result = await postJSON("/api/protocol-form", body);
  if (!result.ok) {
    showError(result.body.error ?? {});
    return false;
  }
  const focusPath = document.activeElement?.dataset?.path;
  protocol = result.body.protocol;
  form.innerHTML = result.body.html;
  saveButton.disabled = false;
  changed();
  if (result.body.error) showError(result.body.error);
  else audit();
  if (focusPath) form.querySelector(`[data-path="${CSS.escape(focusPath)}"]`)?.focus();
  return true;
}

form.addEventListener("input", (event) => {
  const input = event.target;
  if (!input.name) return;
  setAt(protocol, input.name, readInput(input));
  changed();
  const problem = firstNumberProblem();
  if (problem) {
    clearTimeout(timer);
    generation++; // an audit already under way would answer for the text before this one
    showError(problem);
    return;
  }
  scheduleAudit();
});

// Structural edits: add, remove and move stimuli, phases, variables, levels and list entries; add a field.
form.addEventListener("click", (event) => {
  const button = event.target.closest("button[data-edit]");
  if (!button) return;
  event.preventDefault();
  const edit = { op: button.dataset.edit, path: button.dataset.path };
  if (button.dataset.by) edit.by = Number(button.dataset.by);
  if (button.dataset.key) edit.key = button.dataset.key;
  const holder = button.parentElement;
  const kind = holder.querySelector("[data-kind-for]");
  if (kind) edit.kind = kind.value;
  const newName = holder.querySelector("[data-name-for]");
  if (newName) edit.name = newName.value.trim();
  const field = holder.querySelector("[data-add-field-for]");
  if (field) edit.key = field.value;
  redraw({ protocol, edit });
});

const NOT_A_PROTOCOL = "The protocol must be a JSON object with about, background, stimuli, trial and conditions";

const jsonMessage = document.getElementById("json-message");

// Refused JSON is named beside the box as well as in the audit panel; the form and its edits stay as they were.
function refuseJson(message) {
  showError({ field: "", message });
  jsonMessage.textContent = message;
}

document.getElementById("apply-json").addEventListener("click", async () => {
  let parsed;
  try {
    parsed = JSON.parse(jsonBox.value);
  } catch (error) {
    refuseJson(`The JSON does not parse: ${error.message}. Nothing was applied: the form keeps your edits.`);
    return;
  }
  if (parsed === null || typeof parsed !== "object" || Array.isArray(parsed)) {
    refuseJson(`${NOT_A_PROTOCOL}, not ${Array.isArray(parsed) ? "a list" : JSON.stringify(parsed).slice(0, 40)}. ` +
      "Nothing was applied: the form keeps your edits.");
    return;
  }
  jsonMessage.textContent = "";
  if (!(await redraw({ protocol: parsed }))) jsonMessage.textContent = panel.textContent.trim();
});

// -- save and conflicts -----------------------------------------------------------------------------------------
function offerDownload() {
  const link = document.getElementById("download-mine");
  if (link.href) URL.revokeObjectURL(link.href);
  link.href = URL.createObjectURL(new Blob([JSON.stringify(protocol, null, 2) + "\n"], { type: "application/json" }));
}

saveButton.addEventListener("click", async () => {
  const problem = firstNumberProblem();
  if (problem) {
    showError(problem);
    saveStatus.textContent = `Not saved: ${problem.message}`;
    return;
  }
  saveStatus.textContent = "Saving…";
  const result = await putJSON(`/api/protocols/${encodeURIComponent(name)}`, { protocol, base_sha256: baseSha });
  if (result.ok) {
    baseSha = result.body.sha256;
    baseProtocol = structuredClone(protocol);
    dropDraft();
    conflictBox.hidden = true;
    document.querySelector('#rename-form [name="base_sha256"]').value = baseSha;
    saveStatus.textContent = `Saved at ${new Date().toLocaleTimeString()}`;
    return;
  }
  const error = result.body.error ?? {};
  keepDraft();
  if (result.status === 409) {
    saveStatus.textContent = "Not saved: the file changed on disk (your edits are kept)";
    offerDownload();
    conflictBox.hidden = false;
    document.getElementById("merge-report").textContent = "";
    return;
  }
  saveStatus.textContent = `Not saved: ${error.message ?? "error"}`;
  if (error.field) showError(error);
});

function cell(row, text, tag = "td") {
  const element = document.createElement(tag);
  element.textContent = text;
  row.append(element);
}

const shown = (value) => (value === undefined ? "(none)" : JSON.stringify(value));

document.getElementById("merge").addEventListener("click", async () => {
  const saved = await send("GET", `/api/protocols/${encodeURIComponent(name)}`);
  const report = document.getElementById("merge-report");
  if (!saved.ok || !saved.body.protocol) {
    report.textContent = saved.body.error?.message ?? saved.body.error ?? "The saved file does not validate; download your version and fix the file.";
    return;
  }
  const mine = changes(baseProtocol, protocol);
  const { merged, report: rows } = mergeInto(saved.body.protocol, mine);
  const table = document.createElement("table");
  table.className = "compact";
  table.id = "merge-table";
  const head = table.createTHead().insertRow();
  for (const title of ["Field", "Yours", "Saved file", "Result"]) cell(head, title, "th");
  const body = table.createTBody();
  for (const row of rows) {
    const line = body.insertRow();
    cell(line, formatPath(row.path));
    cell(line, shown(row.mine));
    cell(line, shown(row.theirs));
    cell(line, row.status);
  }
  report.replaceChildren(table);
  const note = document.createElement("p");
  note.textContent = `${rows.length} change(s) of yours applied onto the saved file. Check the form and the audit, then Save.`;
  report.append(note);
  baseProtocol = saved.body.protocol;
  baseSha = saved.body.sha256;
  document.querySelector('#rename-form [name="base_sha256"]').value = baseSha;
  await redraw({ protocol: merged });
  saveStatus.textContent = "Merged, not saved yet";
});

// Moving the draft with a rename keeps unsaved edits with the file.
document.getElementById("rename-form").addEventListener("submit", () => {
  const draft = readDraft();
  const to = document.getElementById("rename-to").value.trim();
  if (draft && to) {
    const target = to.endsWith(".json") ? to : `${to}.json`;
    try { localStorage.setItem(`stimlab.protocol-draft.${target}`, JSON.stringify(draft)); } catch { /* kept here */ }
  }
});

// -- a draft from an earlier visit -------------------------------------------------------------------------------
const draft = readDraft();
if (draft && !sameValue(draft.protocol, protocol)) {
  const note = document.getElementById("draft-note");
  const when = new Date(draft.kept_at).toLocaleString();
  const stale = draft.base_sha256 !== baseSha;
  document.getElementById("draft-text").textContent = `Unsaved edits from ${when} are kept in this browser` +
    (stale ? " (the file has changed on disk since; saving will offer a merge)." : ".");
  note.hidden = false;
  document.getElementById("draft-restore").addEventListener("click", async () => {
    baseProtocol = draft.base ?? baseProtocol;
    baseSha = draft.base_sha256 ?? baseSha;
    note.hidden = true;
    await redraw({ protocol: draft.protocol });
  });
  document.getElementById("draft-discard").addEventListener("click", () => {
    dropDraft();
    note.hidden = true;
  });
}

displayChoice?.addEventListener("change", audit);
if (displayChoice) audit();
