"""Provenance of a session's exported numbers: software, protocol, display profile, observer, participant."""

from __future__ import annotations

from ..version import __version__
from .bids import task_label

__all__ = ["provenance"]


def provenance(db, session: dict) -> dict:
    """Where a session's numbers come from: software, protocol, display profile, observer, participant."""
    data = session["compiled"]
    display = db.execute("SELECT name, version, sha256 FROM displays WHERE id = ?", (session["display_id"],)).fetchone()
    return {"stimlab_provenance": 1, "exporter_version": __version__,
            "session": {"id": session["id"], "participant": session["participant"], "status": session["status"],
                        "end_reason": session.get("end_reason"),
                        "started_at": session["started_at"], "ended_at": session["ended_at"],
                        "software_version": session["software_version"],
                        "dry_run": bool(session.get("dry_run") or data.get("dry_run") or False)},
            "protocol": {"file": session["protocol_file"], "sha256": session["protocol_sha256"],
                         "title": data["protocol"]["title"], "version": data["protocol"].get("version", ""),
                         "task_label": task_label(session), "seed": data.get("seed")},
            "display_profile": {"name": display["name"] if display else data["display"]["name"],
                                "version": display["version"] if display else None,
                                "sha256": data["display"]["sha256"], "refresh_hz": data["display"]["refresh_hz"],
                                "bits": data["display"]["bits"]},
            "observer": data["observer"]}
