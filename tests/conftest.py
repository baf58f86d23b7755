"""Shared fixtures: the demo display, a display with the sRGB primaries, and the Brainard (1997) CRT."""

import numpy as np
import pytest

from stimlab.colorimetry._colour import colour
from stimlab.colorimetry.display import DisplayModel
from stimlab.colorimetry.transfer import sRGB_decode
from stimlab.profiles.demo import demo_profile
from stimlab.profiles.profile import build_profile, transfer_entry

# IEC 61966-2-1: primaries and D65 white chromaticities of sRGB.
SRGB_XY = {"red": (0.64, 0.33), "green": (0.30, 0.60), "blue": (0.15, 0.06)}
D65_XY = (0.3127, 0.3290)


def power_transfer(bits=8, gamma=2.2, peak=30.0):
    levels = np.unique(np.r_[np.arange(0, 2**bits, 2**bits // 16), 2**bits - 1]).astype(float)
    return {c: transfer_entry(levels, peak * (levels / levels[-1]) ** gamma, bits) for c in ("red", "green", "blue")}


@pytest.fixture(scope="session")
def demo():
    """The demo display's profile (built from the shipped CSVs)."""
    return demo_profile()


@pytest.fixture(scope="session")
def demo_model(demo):
    return DisplayModel(demo, "ss2")


@pytest.fixture(scope="session")
def srgb_profile():
    """A display with the sRGB primaries and white (white Y = 80 cd/m², IEC 61966-2-1's reference luminance),
    the sRGB curve sampled at 18 levels as a table."""
    levels = np.unique(np.r_[np.linspace(0, 255, 18).round(), 255])
    transfer = {c: transfer_entry(levels, 80 * sRGB_decode(levels), 8, "table") for c in SRGB_XY}
    return build_profile("sRGB reference", transfer=transfer,
                         chromaticities={**SRGB_XY, "white": (*D65_XY, 80.0)})


@pytest.fixture(scope="session")
def crt_profile():
    """colour-science's 'Typical CRT Brainard 1997' primaries as a measured display."""
    msds = colour.characterisation.MSDS_DISPLAY_PRIMARIES["Typical CRT Brainard 1997"]
    return build_profile("Typical CRT Brainard 1997", transfer=power_transfer(),
                         spectra=(msds.wavelengths, msds.values, None))


@pytest.fixture
def protocol_named():
    """A fresh copy of a shipped demo protocol, by file stem."""
    import json
    from pathlib import Path

    def load(name):
        return json.loads((Path(__file__).parents[1] / "protocols" / f"{name}.json").read_text())

    return load


@pytest.fixture
def app(tmp_path):
    """The web app on a fresh data folder with the demo display and protocols (datasette's make_app_client)."""
    from stimlab.profiles.demo import install_demo
    from stimlab.web import create_app

    app = create_app(tmp_path / "data", testing=True)
    install_demo(app.extensions["stimlab.store"])
    return app


@pytest.fixture
def client(app):
    import re

    client = app.test_client()
    page = client.get("/protocols")
    client.csrf = re.search(r'name="csrf-token" content="([^"]+)"', page.text).group(1)
    return client


@pytest.fixture(scope="session")
def browser_type_launch_args():
    """Debian's Chromium, never a downloaded browser; sRGB output so drawn pixels read back unchanged."""
    from browser_support import CHROMIUM_ARGS

    return {"executable_path": "/usr/bin/chromium", "args": CHROMIUM_ARGS}


@pytest.fixture
def browser_context_args(browser_context_args):
    """Full HD, as the demo display; bypass_csp lets Playwright evaluate its wait conditions (the pages' own
    scripts still run as served)."""
    return {**browser_context_args, "viewport": {"width": 1920, "height": 1080},
            "screen": {"width": 1920, "height": 1080}, "bypass_csp": True}


@pytest.fixture
def server(tmp_path):
    """A real ``stimlab serve --demo`` on a free port and a fresh data folder, stopped afterwards."""
    from browser_support import Server

    server = Server(tmp_path / "data").start()
    yield server
    server.stop()
