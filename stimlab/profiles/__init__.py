"""Display profiles: measurement readers, the JSON profile, calibration runs and the demo display."""
