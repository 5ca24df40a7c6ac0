// What the patient search matches: a patient's terms (name words and their hyphen parts, the
// clinic number, the date of birth) and the words a person types, both in the same normal form.
import type { StoredRecord } from './db';

function normalise(value: string): string {
  return value
    .toLocaleLowerCase()
    .normalize('NFD')
    .replace(/\p{Diacritic}/gu, '')
    .replace(/['’]/gu, '');
}

/** Name words, each whole and split at hyphens ("obrien-lowe", "obrien", "lowe"). */
function nameTerms(value: unknown): string[] {
  if (typeof value !== 'string') return [];
  return normalise(value)
    .split(/[\s,]+/u)
    .filter((word) => word.length > 0)
    .flatMap((word) => [
      word,
      ...word.split('-').filter((part) => part.length > 0 && part !== word),
    ]);
}

const TYPED_ISO_DATE = /^(\d{4})-(\d{1,2})(?:-(\d{1,2}))?$/;
const TYPED_DAY_FIRST_DATE = /^(\d{1,2})[/.](\d{1,2})[/.](\d{4})$/;

/**
 * A typed date of birth as the YYYY-MM-DD prefix the terms hold ("2016-4-9", "9/4/2016" and
 * "09.04.2016" → "2016-04-09"; "2016-4" → "2016-04"); any other word as it is. A date is one
 * term: its hyphens are not word breaks. A one-digit day after a two-digit month is left as
 * typed, a prefix of the day still being typed ("2016-04-1" finds the 10th to the 19th).
 */
function dateTerm(word: string): string {
  const dayFirst = TYPED_DAY_FIRST_DATE.exec(word);
  if (dayFirst) {
    const [, d = '', m = '', y = ''] = dayFirst;
    return `${y}-${m.padStart(2, '0')}-${d.padStart(2, '0')}`;
  }
  const iso = TYPED_ISO_DATE.exec(word);
  if (!iso) return word;
  const [, y = '', m = '', d] = iso;
  const month = m.padStart(2, '0');
  if (d === undefined) return `${y}-${month}`;
  return `${y}-${month}-${m.length === 1 ? d.padStart(2, '0') : d}`;
}

/** Normalises what a person types into the search box into the same form as the terms. */
export function searchWords(query: string): string[] {
  return normalise(query)
    .split(/[\s,]+/u)
    .filter((word) => word.length > 0)
    .map(dateTerm);
}

/**
 * A patient's search terms, lower case, each once: the words of the given and family names
 * (whole and their hyphen parts), the clinic number without spaces and the date of birth. A
 * deleted patient has none: it is never listed.
 */
export function patientTerms(record: StoredRecord): string[] {
  if (record.deleted) return [];
  const fields = record.fields;
  const terms = new Set<string>();
  for (const word of [...nameTerms(fields.givenName), ...nameTerms(fields.familyName)]) {
    terms.add(word);
  }
  const clinicNumber = typeof fields.clinicNumber === 'string' ? fields.clinicNumber : '';
  if (clinicNumber) terms.add(clinicNumber.toLocaleLowerCase().replace(/\s+/g, ''));
  if (typeof fields.dateOfBirth === 'string') terms.add(fields.dateOfBirth);
  return [...terms];
}

/** The site a patient belongs to, as the search's site filter compares it. */
export function patientSiteId(record: StoredRecord): string | null {
  return typeof record.fields.siteId === 'string' ? record.fields.siteId : null;
}
