// The page-independent model of a Fuselight letter or handout: what is said, in which order, as
// blocks a renderer lays out (pdf-lib on the tablet and on the server, plain text for an e-mail
// body). Building it is pure: records and the issue date in, blocks out.

export type LetterLayoutKind = 'referrer' | 'handout';

export interface Letterhead {
  clinicName: string;
  addressLines: string[];
}

export interface LabelledValue {
  label: string;
  value: string;
}

/** One row of the findings table: this visit beside the previous one. */
export interface FindingRow {
  label: string;
  current: string;
  /** The previous visit's value, or null when there was no previous visit to compare with. */
  previous: string | null;
}

export interface TrendPoint {
  /** Short date under the point, e.g. "3 Mar 2026". */
  label: string;
  value: number;
  /** The value in the trade's words with both units, e.g. "eso 12.0° (21.3Δ)". */
  valueText: string;
}

export type LetterBlock =
  | { type: 'heading'; text: string }
  | { type: 'paragraph'; text: string }
  | { type: 'list'; items: string[] }
  | {
      type: 'findings';
      columns: [string, string, string];
      rows: FindingRow[];
    }
  | {
      /** Computed by Fuselight; always shown under a label that says it supports judgement. */
      type: 'interpretation';
      label: string;
      items: string[];
    }
  | {
      type: 'trend';
      title: string;
      /** Axis unit, e.g. "°". */
      unit: string;
      points: TrendPoint[];
    }
  | { type: 'notice'; text: string };

export interface SignatureBlock {
  name: string;
  role: string;
  /** e.g. "Finalised 1 December 2026" or "Draft — not signed". */
  statusLine: string;
}

export interface LetterLayout {
  kind: LetterLayoutKind;
  status: 'draft' | 'final';
  letterhead: Letterhead;
  dateLine: string;
  recipient: { name: string; lines: string[] } | null;
  identifiers: LabelledValue[];
  title: string;
  blocks: LetterBlock[];
  signature: SignatureBlock | null;
  /** The clinical caution, printed on every page's foot. */
  caution: string;
  /** Small print at the foot of each page (letter reference). */
  footer: string;
}

/** The label every computed interpretation is printed under. */
export const INTERPRETATION_LABEL =
  'Computed interpretation — offered as support for clinical judgement, not as a diagnosis';
