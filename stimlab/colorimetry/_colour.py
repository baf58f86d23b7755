"""colour-science, imported once without its notice about optional plotting packages.

stimlab never plots through colour-science, so the usage warning it prints when matplotlib is absent is noise
for every command-line call.
"""

import warnings

with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    import colour  # noqa: F401  (re-exported)

__all__ = ["colour"]
