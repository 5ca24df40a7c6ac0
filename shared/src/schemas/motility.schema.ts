// Ocular motility: one movement grade per eye per position of gaze (−4 underaction to +4
// overaction, 0 full), each its own field so two findings never merge into one value.
import { z } from 'zod';
import { measurement, text } from './field-types.schema';
import { sectionShape } from './section.schema';

const grade = (label: string) =>
  measurement({ label, unit: 'grade', min: -4, max: 4, signed: true, integer: true }).nullish();

export const motilitySchema = z.object({
  ...sectionShape,
  rightUp: grade('Right eye, up'),
  rightUpRight: grade('Right eye, up and right'),
  rightRight: grade('Right eye, right'),
  rightDownRight: grade('Right eye, down and right'),
  rightDown: grade('Right eye, down'),
  rightDownLeft: grade('Right eye, down and left'),
  rightLeft: grade('Right eye, left'),
  rightUpLeft: grade('Right eye, up and left'),
  leftUp: grade('Left eye, up'),
  leftUpRight: grade('Left eye, up and right'),
  leftRight: grade('Left eye, right'),
  leftDownRight: grade('Left eye, down and right'),
  leftDown: grade('Left eye, down'),
  leftDownLeft: grade('Left eye, down and left'),
  leftLeft: grade('Left eye, left'),
  leftUpLeft: grade('Left eye, up and left'),
  headPosture: text('Head posture', { max: 200 }).nullish(),
  notes: text('Motility notes', { max: 2000 }).nullish(),
});

export const GAZE_POSITIONS = [
  'Up',
  'UpRight',
  'Right',
  'DownRight',
  'Down',
  'DownLeft',
  'Left',
  'UpLeft',
] as const;
export type GazePosition = (typeof GAZE_POSITIONS)[number];
