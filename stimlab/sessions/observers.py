"""Which observer a protocol is compiled for: a standard one, or a participant's stored adjustment.

A protocol names its observer in ``about.observer``: a standard key (``ss2``, ``ss10``, ``sp``), or
``adjusted:<participant>`` for the participant's latest luminance weights from flicker photometry, which live in
the data folder's SQLite store. The web app and the ``stimlab audit`` / ``stimlab compile`` commands both resolve
it here.
"""

from __future__ import annotations

from ..colorimetry.observers import Observer, observer
from ..errors import InputError

__all__ = ["ADJUSTED_PREFIX", "observer_for_protocol"]

ADJUSTED_PREFIX = "adjusted:"


def observer_for_protocol(store, db, protocol: dict) -> tuple[Observer | None, int | None]:
    """The observer ``protocol`` asks for, and the id of the stored adjustment it uses.

    Parameters
    ----------
    store
        The data folder's :class:`~stimlab.sessions.store.Store`.
    db
        An open connection to its database.
    protocol
        A validated protocol.

    Returns
    -------
    tuple
        ``(None, None)`` for a standard observer (the compiler picks it from the protocol), otherwise the standard
        observer with the participant's latest luminance weights and the adjustment's id.

    Raises
    ------
    InputError
        No adjustment is stored for that participant (field ``about.observer``).
    """
    wanted = protocol["about"]["observer"]
    if not wanted.startswith(ADJUSTED_PREFIX):
        return None, None
    code = wanted[len(ADJUSTED_PREFIX):]
    adjustment = store.latest_adjustment(db, code)
    if adjustment is None:
        raise InputError(f"no observer adjustment is stored for participant {code!r}; run the flicker photometry "
                         "protocol with them and save its result from the session page", field="about.observer")
    standard = observer(adjustment["standard_observer"])
    description = (f"flicker photometry, participant {code}, adjustment {adjustment['id']} of "
                   f"{adjustment['created_at'][:10]} (L/M ratio {adjustment['ratio']:.4f})")
    return standard.with_luminance_weights(adjustment["w_L"], adjustment["w_M"], description), adjustment["id"]
