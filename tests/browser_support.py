"""Helpers for the browser tests: a stimlab server as a subprocess that can be stopped and started again."""

import os
import socket
import subprocess
import sys
import time
import urllib.request

from stimlab.profiles.demo import demo_file

CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
                 "--no-first-run", "--force-color-profile=srgb"]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class Server:
    """``stimlab serve --demo`` on a data folder; its output is shown if it dies before answering."""

    def __init__(self, data, port=None, python=sys.executable, cwd=None):
        self.data = data
        self.python = python
        self.cwd = cwd
        self.port = port or free_port()
        self.url = f"http://127.0.0.1:{self.port}"
        self.process = None
        self.log = None

    def start(self):
        # Its output goes to a file: a pipe nobody reads would fill up and stall the server mid-test.
        self.data.mkdir(parents=True, exist_ok=True)
        self.log = open(self.data / "serve.log", "ab")
        self.process = subprocess.Popen(
            [self.python, "-m", "stimlab.cli", "serve", "--data", str(self.data), "--demo", "--port",
             str(self.port)], stdout=self.log, stderr=subprocess.STDOUT, env={**os.environ, "PYTHONUNBUFFERED": "1"},
            cwd=self.cwd)
        for _ in range(150):
            if self.process.poll() is not None:
                output = (self.data / "serve.log").read_text(errors="replace")[-4000:]
                raise RuntimeError(f"stimlab serve exited with {self.process.returncode}:\n{output}")
            try:
                urllib.request.urlopen(self.url + "/api/", timeout=1)
                return self
            except OSError:
                time.sleep(0.1)
        self.stop()
        raise RuntimeError("stimlab serve did not answer within 15 s")

    def stop(self):
        if self.process and self.process.poll() is None:
            self.process.kill()
            self.process.wait(timeout=10)
        if self.log:
            self.log.close()
            self.log = None


def fill_display_form(page, tmp_path, name, transfer_text=None):
    """Fill the open 'add a display' form with the demo display's measurements (or ``transfer_text``) under ``name``."""
    spectra, transfer = tmp_path / "spectra.csv", tmp_path / "transfer.csv"
    spectra.write_text(demo_file("vale_street_b12_spectra.csv"))
    transfer.write_text(transfer_text or demo_file("vale_street_b12_transfer.csv"))
    page.get_by_label("Name").fill(name)
    page.get_by_label("Bits per channel").fill("10")
    page.get_by_label("Visible size (cm)").fill("53.1,29.9")
    page.get_by_label("Resolution (pixels)").fill("1920,1080")
    page.get_by_label("Primary spectra (CSV)").set_input_files(str(spectra))
    page.get_by_label("Transfer measurements (CSV)").set_input_files(str(transfer))
