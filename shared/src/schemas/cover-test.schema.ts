// Cover test and prism cover test at near and distance. Horizontal and vertical parts of a
// deviation are separate fields: a deviation can be both (e.g. exo with a hyper).
import { z } from 'zod';
import { choice, measurement, yesNo } from './field-types.schema';
import { sectionShape } from './section.schema';

const finding = (at: string) =>
  choice(`${at} cover test`, { orthophoria: 'Orthophoria', phoria: 'Phoria', tropia: 'Tropia' }, [
    'orthophoria',
    'phoria',
    'tropia',
  ]).nullish();
const horizontalDirection = (at: string) =>
  choice(`${at} horizontal direction`, { eso: 'Eso', exo: 'Exo' }, ['eso', 'exo']).nullish();
const verticalDirection = (at: string) =>
  choice(`${at} vertical direction`, { hyper: 'Hyper', hypo: 'Hypo' }, ['hyper', 'hypo']).nullish();
const deviatingEye = (at: string) =>
  choice(
    `${at} deviating eye`,
    { right: 'Right eye', left: 'Left eye', alternating: 'Alternating' },
    ['right', 'left', 'alternating'],
  ).nullish();
const control = (at: string) =>
  choice(`${at} recovery or control`, { good: 'Good', fair: 'Fair', poor: 'Poor' }, [
    'good',
    'fair',
    'poor',
  ]).nullish();

export const coverTestSchema = z.object({
  ...sectionShape,
  correctionWorn: yesNo('Correction worn').nullish(),
  nearFinding: finding('Near'),
  nearHorizontalDirection: horizontalDirection('Near'),
  nearVerticalDirection: verticalDirection('Near'),
  nearEye: deviatingEye('Near'),
  nearControl: control('Near'),
  distanceFinding: finding('Distance'),
  distanceHorizontalDirection: horizontalDirection('Distance'),
  distanceVerticalDirection: verticalDirection('Distance'),
  distanceEye: deviatingEye('Distance'),
  distanceControl: control('Distance'),
});

/** Size of a prism in Δ; the base direction carries the sense. */
const prismPd = (label: string) => measurement({ label, unit: 'Δ', min: 0, max: 100 }).nullish();
const horizontalBase = (label: string) =>
  choice(label, { in: 'Base in', out: 'Base out' }, ['in', 'out']).nullish();
const verticalBase = (label: string) =>
  choice(label, { up: 'Base up', down: 'Base down' }, ['up', 'down']).nullish();
const verticalBaseEye = (label: string) =>
  choice(label, { right: 'Right eye', left: 'Left eye' }, ['right', 'left']).nullish();

export const prismCoverTestSchema = z.object({
  ...sectionShape,
  correctionWorn: yesNo('Correction worn').nullish(),
  nearHorizontalPd: prismPd('Near horizontal prism'),
  nearHorizontalBase: horizontalBase('Near horizontal prism base'),
  nearVerticalPd: prismPd('Near vertical prism'),
  nearVerticalBase: verticalBase('Near vertical prism base'),
  nearVerticalEye: verticalBaseEye('Near vertical prism before'),
  distanceHorizontalPd: prismPd('Distance horizontal prism'),
  distanceHorizontalBase: horizontalBase('Distance horizontal prism base'),
  distanceVerticalPd: prismPd('Distance vertical prism'),
  distanceVerticalBase: verticalBase('Distance vertical prism base'),
  distanceVerticalEye: verticalBaseEye('Distance vertical prism before'),
});
