// Checks before the first trial: refresh rate, geometry, colour pipeline, timer resolution.

export function measureRefresh(durationMs = 2000) {
  return new Promise((resolve) => {
    const stamps = [];
    function tick(t) {
      stamps.push(t);
      if (t - stamps[0] < durationMs) requestAnimationFrame(tick);
      else {
        const intervals = stamps.slice(1).map((s, i) => s - stamps[i]).sort((a, b) => a - b);
        const median = intervals[intervals.length >> 1];
        resolve({ median_interval_ms: median, refresh_hz: 1000 / median, frames: stamps.length });
      }
    }
    requestAnimationFrame(tick);
  });
}

// Draw known device values with the painter's own path and read them back: every one must come back equal.
export function colourSelfTest(painter, colours, simulateMismatch = false) {
  const mismatches = [];
  for (const device of colours) {
    const read = painter.probe(device);
    const expected = simulateMismatch ? device.map((v) => Math.min(v + 1, painter.dMax)) : device;
    if (read.some((v, i) => v !== expected[i])) mismatches.push({ device, read });
  }
  return { tested: colours.length, mismatches, passed: mismatches.length === 0 };
}

export function geometry(profileSize) {
  const [width, height] = profileSize;
  const dpr = devicePixelRatio;
  const screenPx = [Math.round(screen.width * dpr), Math.round(screen.height * dpr)];
  const windowPx = [Math.round(innerWidth * dpr), Math.round(innerHeight * dpr)];
  return { device_pixel_ratio: dpr, screen_px: screenPx, window_px: windowPx, profile_px: [width, height],
    screen_matches: screenPx[0] === width && screenPx[1] === height };
}

export function timerResolution() {
  return { cross_origin_isolated: self.crossOriginIsolated === true,
    expected_resolution_us: self.crossOriginIsolated ? 5 : 100 };
}
