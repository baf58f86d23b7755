// The protocol editor: form inputs named by JSON path, a debounced live audit, inline errors, save.
import { postJSON, putJSON } from "./api.js";
import { setAt } from "./json_path.js";

const editor = document.getElementById("editor");
const form = document.getElementById("protocol-form");
const panel = document.getElementById("audit-panel");
const jsonBox = document.getElementById("protocol-json");
const saveButton = document.getElementById("save");
const saveStatus = document.getElementById("save-status");
const displayChoice = document.getElementById("audit-display");

let protocol = JSON.parse(document.getElementById("protocol-data").textContent);
let baseSha = editor.dataset.sha256;
let timer = null;
let generation = 0;

function readInput(input) {
  if (input.dataset.kind === "boolean") return input.checked;
  if (input.dataset.kind === "number") {
    if (input.value.trim() === "") return null;
    const value = Number(input.value);
    return Number.isFinite(value) ? value : input.value;
  }
  return input.value;
}

function clearErrors() {
  for (const field of form.querySelectorAll(".invalid")) {
    field.classList.remove("invalid");
    const message = field.querySelector(":scope > .message");
    if (message) message.textContent = "";
  }
  for (const input of form.querySelectorAll("[aria-invalid]")) input.removeAttribute("aria-invalid");
}

function showError(error) {
  clearErrors();
  const field = error.field ?? "";
  const text = error.message ?? "invalid";
  // The input itself, else the closest enclosing part of the form (a fieldset or a vector).
  let target = form.querySelector(`[name="${CSS.escape(field)}"]`);
  let holder = target?.closest(".field");
  if (!holder) {
    let path = field;
    while (path && !form.querySelector(`[data-path="${CSS.escape(path)}"]`)) path = path.replace(/(\.[^.[\]]+|\[\d+\])$/, "");
    holder = path ? form.querySelector(`[data-path="${CSS.escape(path)}"]`) : null;
  }
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
  note.textContent = field ? `${field}: ${text}` : text;
  panel.append(note);
}

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

form.addEventListener("input", (event) => {
  const input = event.target;
  if (!input.name) return;
  setAt(protocol, input.name, readInput(input));
  syncJson();
  saveStatus.textContent = "Unsaved changes";
  scheduleAudit();
});

document.getElementById("apply-json").addEventListener("click", async () => {
  let parsed;
  try {
    parsed = JSON.parse(jsonBox.value);
  } catch (error) {
    showError({ field: "", message: `the JSON does not parse: ${error.message}` });
    return;
  }
  const result = await postJSON("/api/protocol-form", { protocol: parsed });
  if (!result.ok) {
    showError(result.body.error ?? {});
    return;
  }
  protocol = parsed;
  form.innerHTML = result.body.html;
  saveButton.disabled = false;
  saveStatus.textContent = "Unsaved changes";
  audit();
});

saveButton.addEventListener("click", async () => {
  saveStatus.textContent = "Saving…";
  const result = await putJSON(`/api/protocols/${encodeURIComponent(editor.dataset.name)}`,
    { protocol, base_sha256: baseSha });
  if (result.ok) {
    baseSha = result.body.sha256;
    saveStatus.textContent = `Saved at ${new Date().toLocaleTimeString()}`;
  } else {
    const error = result.body.error ?? {};
    saveStatus.textContent = `Not saved: ${error.message ?? "error"}`;
    if (error.field) showError(error);
  }
});

displayChoice?.addEventListener("change", audit);
if (displayChoice) audit();
