// Default norms for fusional ranges, kept as data a clinic can replace. Every row names its
// source and how firm it is (docs/clinical-reference.md, "Fusional vergence norms"): published,
// a teaching source, or a value recalled from memory and not confirmed against a publication.
import { z } from 'zod';
import { ClinicalInputError } from './clinical-input.error';

export const fusionalDirections = [
  'convergence',
  'divergence',
  'right up',
  'left up',
  'vertical total',
  'incyclo',
  'excyclo',
  'cyclo total',
] as const;
export type FusionalDirection = (typeof fusionalDirections)[number];

export const fusionalPoints = ['blur', 'break', 'recovery'] as const;
export type FusionalPoint = (typeof fusionalPoints)[number];

export type FusionalUnit = 'deg' | 'pd';

const normValueSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('mean-sd'), mean: z.number(), sd: z.number().positive() }),
  z
    .object({ kind: z.literal('range'), low: z.number(), high: z.number() })
    .refine((r) => r.low <= r.high, { message: 'low must not exceed high' }),
  z.object({ kind: z.literal('median'), median: z.number() }),
]);

const normRowSchema = z.object({
  direction: z.enum(fusionalDirections),
  viewing: z.enum(['distance', 'near', 'any']),
  point: z.enum(fusionalPoints),
  unit: z.enum(['deg', 'pd']),
  norm: normValueSchema,
  evidence: z.enum(['published', 'teaching source', 'memory']),
  citation: z.string().min(1),
  note: z.string().optional(),
});

export const fusionalNormsTableSchema = z.object({
  id: z.string().min(1),
  version: z.string().min(1),
  title: z.string().min(1),
  instrument: z.enum(['amblyoscope', 'prism bar']),
  rows: z.array(normRowSchema).min(1),
});

export type FusionalNormValue = z.infer<typeof normValueSchema>;
export type FusionalNormRow = z.infer<typeof normRowSchema>;
export type FusionalNormsTable = z.infer<typeof fusionalNormsTableSchema>;

/** Validates a clinic's replacement table; throws ClinicalInputError naming the bad path. */
export function parseFusionalNormsTable(input: unknown): FusionalNormsTable {
  const parsed = fusionalNormsTableSchema.safeParse(input);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const path = issue && issue.path.length > 0 ? issue.path.join('.') : 'table';
    throw new ClinicalInputError(`normsTable.${path}`, issue?.message ?? 'is not a norms table');
  }
  return parsed.data;
}

const MEMORY =
  '[memory] recalled value, not confirmed against a publication; replace with the clinic’s own';
const TEACHING = 'teaching source (no published reference; common practice)';

/**
 * Amblyoscope amplitudes measured from the subjective angle; findings are distance findings
 * because the optics put the target at infinity.
 */
export const AMBLYOSCOPE_FUSIONAL_NORMS: FusionalNormsTable = {
  id: 'fuselight.fusional-norms.amblyoscope',
  version: '1.0.0',
  title: 'Amblyoscope fusional amplitudes (Fuselight defaults)',
  instrument: 'amblyoscope',
  rows: [
    {
      direction: 'convergence',
      viewing: 'distance',
      point: 'break',
      unit: 'deg',
      norm: { kind: 'range', low: 25, high: 30 },
      evidence: 'teaching source',
      citation: TEACHING,
      note: 'convergence about +25° to +30°; proximal convergence often inflates it',
    },
    {
      direction: 'divergence',
      viewing: 'distance',
      point: 'break',
      unit: 'deg',
      norm: { kind: 'range', low: 4, high: 6 },
      evidence: 'memory',
      citation: MEMORY,
      note: 'divergence about −4° to −6°, stored here as an amplitude',
    },
    {
      direction: 'right up',
      viewing: 'distance',
      point: 'break',
      unit: 'pd',
      norm: { kind: 'range', low: 2, high: 4 },
      evidence: 'memory',
      citation: MEMORY,
      note: 'vertical about 2–4Δ, read as each eye up',
    },
    {
      direction: 'left up',
      viewing: 'distance',
      point: 'break',
      unit: 'pd',
      norm: { kind: 'range', low: 2, high: 4 },
      evidence: 'memory',
      citation: MEMORY,
      note: 'vertical about 2–4Δ, read as each eye up',
    },
    {
      direction: 'cyclo total',
      viewing: 'distance',
      point: 'break',
      unit: 'deg',
      norm: { kind: 'range', low: 15, high: 25 },
      evidence: 'memory',
      citation: MEMORY,
      note: 'cyclofusion about 15–25°, read as the total of in and ex',
    },
  ],
};

const MORGAN = 'Morgan 1944, Am J Optom 21:477; as tabled in Scheiman & Wick, Table 2.2';

function morgan(
  direction: 'convergence' | 'divergence',
  viewing: 'distance' | 'near',
  point: FusionalPoint,
  mean: number,
  sd: number,
): FusionalNormRow {
  return {
    direction,
    viewing,
    point,
    unit: 'pd',
    norm: { kind: 'mean-sd', mean, sd },
    evidence: 'published',
    citation: MORGAN,
    note: direction === 'convergence' ? 'base-out' : 'base-in',
  };
}

/** Prism-bar vergences in Δ: base-out is convergence, base-in divergence. */
export const PRISM_BAR_FUSIONAL_NORMS: FusionalNormsTable = {
  id: 'fuselight.fusional-norms.prism-bar-morgan',
  version: '1.0.0',
  title: 'Prism-bar fusional vergence (Morgan 1944; vertical from later studies)',
  instrument: 'prism bar',
  rows: [
    morgan('convergence', 'distance', 'blur', 9, 4),
    morgan('convergence', 'distance', 'break', 19, 8),
    morgan('convergence', 'distance', 'recovery', 10, 4),
    morgan('divergence', 'distance', 'break', 7, 3),
    morgan('divergence', 'distance', 'recovery', 4, 2),
    morgan('convergence', 'near', 'blur', 17, 5),
    morgan('convergence', 'near', 'break', 21, 6),
    morgan('convergence', 'near', 'recovery', 11, 7),
    morgan('divergence', 'near', 'blur', 13, 4),
    morgan('divergence', 'near', 'break', 21, 4),
    morgan('divergence', 'near', 'recovery', 13, 5),
    ...(['right up', 'left up'] as const).map((direction): FusionalNormRow => ({
      direction,
      viewing: 'any',
      point: 'break',
      unit: 'pd',
      norm: { kind: 'range', low: 2.5, high: 3 },
      evidence: 'published',
      citation: 'AMA Arch Ophthalmol 1953;49:313',
      note: 'most people ±2.5 to ±3Δ',
    })),
    {
      direction: 'vertical total',
      viewing: 'distance',
      point: 'break',
      unit: 'pd',
      norm: { kind: 'median', median: 5.5 },
      evidence: 'published',
      citation: 'Ulyat, Firth & Griffiths, Br Ir Orthopt J 2004;1:43',
      note: 'median total vertical break at distance',
    },
  ],
};
