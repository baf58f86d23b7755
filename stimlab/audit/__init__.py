"""The pre-flight audit: gamut, headroom, bit depth, timing, predictions and photosensitivity of a protocol."""

from .preflight import KINDS, SEVERITIES, audit_protocol

__all__ = ["KINDS", "SEVERITIES", "audit_protocol"]
