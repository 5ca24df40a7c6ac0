// How the charting screens write people and dates.
import type { LocalRecord } from '../../data';
import { ageOnDate } from './interpretations';

export function patientFullName(patient: LocalRecord<'patient'> | null | undefined): string {
  if (!patient) return 'Unknown patient';
  return `${patient.fields.givenName} ${patient.fields.familyName}`;
}

/** "2016-04-09" → "9 Apr 2016", read the same on every tablet. */
export function formatDate(date: string): string {
  const [y, m, d] = date.split('-').map(Number);
  if (!y || !m || !d) return date;
  const months = [
    'Jan',
    'Feb',
    'Mar',
    'Apr',
    'May',
    'Jun',
    'Jul',
    'Aug',
    'Sep',
    'Oct',
    'Nov',
    'Dec',
  ];
  return `${d} ${months[m - 1] ?? ''} ${y}`;
}

export function describeAge(dateOfBirth: string, onDate: string): string {
  const age = ageOnDate(dateOfBirth, onDate);
  return age === undefined ? '' : `${age} ${age === 1 ? 'year' : 'years'}`;
}
