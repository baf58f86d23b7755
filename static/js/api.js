// Talking to the stimlab server: JSON in and out, the CSRF token on every request, one error shape.
const token = document.querySelector('meta[name="csrf-token"]')?.content ?? "";

// A runner writes its session's log with the session's run token and no cookies (stimlab/web/security.py).
export function requestOptions(method, body, runToken = null) {
  const headers = { "Content-Type": "application/json" };
  if (runToken) headers["X-Run-Token"] = runToken;
  else headers["X-CSRF-Token"] = token;
  return { method, headers, body, credentials: runToken ? "omit" : "same-origin" };
}

// One request and its JSON answer; a network failure or a non-JSON answer becomes the one error shape.
async function exchange(url, options) {
  let response;
  try {
    response = await fetch(url, options);
  } catch {
    return { ok: false, status: 0, body: { error: { message: "stimlab is not reachable: is the server still running?" } } };
  }
  let data;
  try {
    data = await response.json();
  } catch {
    data = { error: { message: `unexpected answer from the server (HTTP ${response.status})` } };
  }
  return { ok: response.ok, status: response.status, body: data };
}

export function send(method, url, body, { runToken = null } = {}) {
  return exchange(url, requestOptions(method, body === undefined ? undefined : JSON.stringify(body), runToken));
}

export const postJSON = (url, body) => send("POST", url, body);
export const putJSON = (url, body) => send("PUT", url, body);

// A multipart form (files included) to a JSON API: the page, and the files chosen in it, stay as they are.
export function sendForm(url, formData) {
  return exchange(url, { method: "POST", body: formData, credentials: "same-origin", headers: { "X-CSRF-Token": token } });
}
