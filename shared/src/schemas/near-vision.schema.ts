// Near point of convergence, accommodation and stereoacuity: near-vision measurements taken
// outside the amblyoscope.
import { z } from 'zod';
import { measurement, text, yesNo } from './field-types.schema';
import { sectionShape } from './section.schema';

export const nearPointConvergenceSchema = z.object({
  ...sectionShape,
  breakCm: measurement({
    label: 'Near point of convergence, break',
    unit: 'cm',
    min: 0,
    max: 100,
  }).nullish(),
  recoveryCm: measurement({
    label: 'Near point of convergence, recovery',
    unit: 'cm',
    min: 0,
    max: 100,
  }).nullish(),
  targetUsed: text('Target used', { max: 120 }).nullish(),
});

// A near point (cm) and an amplitude (D) are separate fields: a push-up test gives the first, a
// minus-lens test the second; the other is derived, never stored twice.
const nearPointCm = (label: string) =>
  measurement({ label, unit: 'cm', min: 1, max: 100 }).nullish();
const amplitudeD = (label: string) => measurement({ label, unit: 'D', min: 0, max: 30 }).nullish();

export const accommodationSchema = z.object({
  ...sectionShape,
  rightNearPointCm: nearPointCm('Right near point of accommodation'),
  leftNearPointCm: nearPointCm('Left near point of accommodation'),
  binocularNearPointCm: nearPointCm('Binocular near point of accommodation'),
  rightAmplitudeD: amplitudeD('Right amplitude of accommodation'),
  leftAmplitudeD: amplitudeD('Left amplitude of accommodation'),
  binocularAmplitudeD: amplitudeD('Binocular amplitude of accommodation'),
  method: text('Method', { max: 120 }).nullish(),
});

export const stereoacuitySchema = z.object({
  ...sectionShape,
  valueArcsec: measurement({ label: 'Stereoacuity', unit: '″', min: 1, max: 10000 }).nullish(),
  noneDetected: yesNo('No stereopsis detected on this test').nullish(),
  testUsed: text('Stereo test used', { max: 120, min: 1 }).nullish(),
  testDistanceCm: measurement({ label: 'Test distance', unit: 'cm', min: 10, max: 600 }).nullish(),
});
