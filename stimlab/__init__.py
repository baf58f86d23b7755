"""stimlab: stimuli defined by what the cones receive, shown as exact digital RGB on one calibrated display."""

__version__ = "0.1.0"
