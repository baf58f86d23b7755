"""stimlab: stimuli defined by what the cones receive, shown as exact digital RGB on one calibrated display.

The few entry points a script needs::

    import stimlab
    profile = stimlab.load_profile("b12.json")
    protocol = stimlab.load_protocol("protocols/afterimage_null.json")
    compiled = stimlab.compile_protocol(protocol, profile)
    report = stimlab.audit_protocol(compiled, protocol, profile)

The package is layered, each layer using only those below it: ``colorimetry`` (observers, spaces, the display
model), ``profiles`` (measurements, display profiles, calibration), ``experiment`` (protocols, design, compiling to
frames), ``audit``, ``sessions`` (the SQLite store, log ingest, exports), then ``cli`` and ``web``.
"""

from .audit import audit_protocol
from .colorimetry.stimulus import Background
from .experiment.compile import compile_protocol
from .experiment.protocol import load_protocol
from .profiles.profile import load_profile
from .version import __version__

__all__ = ["Background", "audit_protocol", "compile_protocol", "load_profile", "load_protocol", "__version__"]
