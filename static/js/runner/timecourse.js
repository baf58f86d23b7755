// Modulation of a stimulus at a frame of its phase: 1 = its compiled colour, 0 = background, -1 = the opposite.
// Plain arithmetic on compiled frame counts: the runner does no colour maths.

export function modulation(course, frame, phaseFrames) {
  let m = 1;
  const kind = course?.kind ?? "steady";
  if (kind === "square") {
    const half = Math.max(1, Math.round(course.frames_per_cycle / 2));
    m = Math.floor(frame / half) % 2 === 0 ? 1 : -1;
  } else if (kind === "sine" || kind === "counterphase") {
    m = Math.sin((2 * Math.PI * frame) / course.frames_per_cycle);
  }
  if (kind !== "steady" && course.mode === "on_off") m = (1 + m) / 2;
  if (course?.ramp_on_frames) m *= Math.min(1, (frame + 1) / course.ramp_on_frames);
  if (course?.ramp_off_frames && phaseFrames) m *= Math.min(1, (phaseFrames - frame) / course.ramp_off_frames);
  return m;
}

export function tableIndex(m, table) {
  const steps = table.length - 1;
  return Math.max(0, Math.min(steps, Math.round(((m + 1) / 2) * steps)));
}
