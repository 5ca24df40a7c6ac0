// Visual acuity per eye, at distance and near, uncorrected, corrected and with a pinhole. Stored in
// logMAR (for averaging and comparison) beside the notation as entered (6/9, 20/40, 0.5, 55 letters,
// CF), so a chart shows what the clinician wrote.
import { z } from 'zod';
import { measurement, text } from './field-types.schema';
import { sectionShape } from './section.schema';

const logMar = (label: string) =>
  measurement({ label, unit: 'logMAR', min: -0.5, max: 3, digits: 1 }).nullish();
const notation = (label: string) => text(label, { max: 30 }).nullish();

export const visualAcuitySchema = z.object({
  ...sectionShape,
  rightDistanceUncorrectedLogMar: logMar('Right distance acuity, uncorrected'),
  rightDistanceUncorrectedNotation: notation('Right distance acuity, uncorrected, as entered'),
  rightDistanceCorrectedLogMar: logMar('Right distance acuity, corrected'),
  rightDistanceCorrectedNotation: notation('Right distance acuity, corrected, as entered'),
  rightDistancePinholeLogMar: logMar('Right distance acuity, pinhole'),
  rightDistancePinholeNotation: notation('Right distance acuity, pinhole, as entered'),
  rightNearUncorrectedLogMar: logMar('Right near acuity, uncorrected'),
  rightNearUncorrectedNotation: notation('Right near acuity, uncorrected, as entered'),
  rightNearCorrectedLogMar: logMar('Right near acuity, corrected'),
  rightNearCorrectedNotation: notation('Right near acuity, corrected, as entered'),
  rightNearPinholeLogMar: logMar('Right near acuity, pinhole'),
  rightNearPinholeNotation: notation('Right near acuity, pinhole, as entered'),
  leftDistanceUncorrectedLogMar: logMar('Left distance acuity, uncorrected'),
  leftDistanceUncorrectedNotation: notation('Left distance acuity, uncorrected, as entered'),
  leftDistanceCorrectedLogMar: logMar('Left distance acuity, corrected'),
  leftDistanceCorrectedNotation: notation('Left distance acuity, corrected, as entered'),
  leftDistancePinholeLogMar: logMar('Left distance acuity, pinhole'),
  leftDistancePinholeNotation: notation('Left distance acuity, pinhole, as entered'),
  leftNearUncorrectedLogMar: logMar('Left near acuity, uncorrected'),
  leftNearUncorrectedNotation: notation('Left near acuity, uncorrected, as entered'),
  leftNearCorrectedLogMar: logMar('Left near acuity, corrected'),
  leftNearCorrectedNotation: notation('Left near acuity, corrected, as entered'),
  leftNearPinholeLogMar: logMar('Left near acuity, pinhole'),
  leftNearPinholeNotation: notation('Left near acuity, pinhole, as entered'),
  chartUsed: text('Chart used', { max: 120 }).nullish(),
});
