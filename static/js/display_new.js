// The 'add a display' form sent in the background: on an error the page stays, with both chosen files still in
// their inputs, and the message sits on the field it names.
import { sendForm } from "./api.js";

const form = document.getElementById("display-form");
const alert = document.getElementById("form-error-live");

form.addEventListener("submit", async (event) => {
  event.preventDefault();
  const button = form.querySelector('button[type="submit"]');
  button.disabled = true;
  const result = await sendForm(form.dataset.api, new FormData(form));
  button.disabled = false;
  for (const field of form.querySelectorAll(".field.invalid")) field.classList.remove("invalid");
  for (const input of form.querySelectorAll("[aria-invalid]")) input.removeAttribute("aria-invalid");
  if (result.ok) {
    window.location.assign(`${form.dataset.shown}${result.body.id}`);
    return;
  }
  const error = result.body.error ?? {};
  alert.textContent = `Not added: ${error.message ?? "the server refused the form"}`; // the message names file and row
  alert.hidden = false;
  // The field named, else the file input holding the file named (a CSV's column is not a form field).
  const input = (error.field ? form.querySelector(`[name="${CSS.escape(error.field)}"]`) : null) ??
    [...form.querySelectorAll('input[type="file"]')].find((i) => error.file && i.files[0]?.name === error.file);
  if (input) {
    input.setAttribute("aria-invalid", "true");
    input.closest(".field")?.classList.add("invalid");
    input.focus();
  } else {
    alert.focus();
  }
});
