// Talking to the stimlab server: JSON in and out, the CSRF token on every request, one error shape.
const token = document.querySelector('meta[name="csrf-token"]')?.content ?? "";

export async function send(method, url, body) {
  let response;
  try {
    response = await fetch(url, {
      method,
      headers: { "Content-Type": "application/json", "X-CSRF-Token": token },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
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

export const postJSON = (url, body) => send("POST", url, body);
export const putJSON = (url, body) => send("PUT", url, body);
