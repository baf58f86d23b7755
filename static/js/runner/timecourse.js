// The modulation step of a stimulus at a frame of its phase, looked up in the compiled frame plan (see
// stimlab/experiment/timecourse.py for the rule that made it): no rounding, no trigonometry here.
// A step runs from -255 to 255; step + 255 indexes the stimulus's modulation table, 255 is its own colour.
export const STEPS = 255;

export function stepAt(course, frame, phaseFrames) {
  const { head, tail, cycle } = course;
  if (frame < head.length) return head[frame];
  if (phaseFrames && tail.length && phaseFrames - frame <= tail.length) return tail[tail.length - (phaseFrames - frame)];
  return cycle[frame % cycle.length];
}
