// One runner per session: before presenting, the page takes the session's lease. When the session is open in
// another tab or window, say so in plain words and let the experimenter take it over here explicitly.
export async function takeSession(log, say) {
  const first = await log.claim(false);
  if (first.ok || first.status !== 409) return true; // any other failure shows up on the first batch
  say("<h1>This session is open in another tab or window</h1>" +
    "<p>Only one window may run a session. Close the other one, or take the session over here: the other window " +
    "then stops presenting and keeps what it has not sent yet.</p>" +
    '<p><button type="button" id="take-over">Take the session over here</button></p>', "error");
  window.stimlabState = "open_elsewhere";
  return new Promise((resolve) => {
    // When the other window has closed (it stops answering), the session comes here by itself.
    const poll = setInterval(async () => {
      if ((await log.claim(false)).ok) {
        clearInterval(poll);
        resolve(true);
      }
    }, 2000);
    document.getElementById("take-over").addEventListener("click", async () => {
      const taken = await log.claim(true);
      if (taken.ok) {
        clearInterval(poll);
        resolve(true);
      } else {
        say(`<p>The session could not be taken over: ${taken.message || "the server did not answer"}.</p>`, "error");
      }
    }, { once: true });
  });
}

// The runner whose session another window took: stop presenting; the log keeps its unsent batches.
export function whenDisplaced(log, schedule, stop) {
  log.onDisplaced = () => {
    if (!schedule.paused) schedule.pause("taken_over");
    schedule.resume = () => {}; // this window may not present again: only a reload (taking the lease) may
    stop("This session was taken over by another window",
      "This window has stopped presenting. What it had not sent is kept in this browser and is sent when the " +
      "session's runner page is opened again here; leave this tab open or reload it after the other one closes.");
  };
}
