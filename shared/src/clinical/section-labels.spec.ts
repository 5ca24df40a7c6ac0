import { describe, expect, it } from 'vitest';
import { COLLECTIONS } from '../schemas/collection-names.schema';
import { fieldMeta } from '../schemas/registry';
import { COLLECTION_LABELS, collectionLabel } from './section-labels';

describe('collection labels', () => {
  it('names every synced collection once, each name different', () => {
    const labels = COLLECTIONS.map((c) => collectionLabel(c));
    expect(labels.every((l) => l.length > 0)).toBe(true);
    expect(new Set(labels).size).toBe(COLLECTIONS.length);
  });

  it('uses the trade terms for the Sections spelled more than one way before', () => {
    expect(collectionLabel('motility')).toBe('Ocular motility');
    expect(collectionLabel('suppressionScotoma')).toBe('Suppression scotoma');
    expect(collectionLabel('patient')).toBe('Patient details');
  });

  it('keeps an unknown collection its own name, and is what an Addendum offers to amend', () => {
    expect(collectionLabel('toString')).toBe('toString');
    expect(collectionLabel('somethingNew')).toBe('somethingNew');
    expect(fieldMeta.addendum.amendedCollection.options).toContainEqual({
      value: 'motility',
      label: COLLECTION_LABELS.motility,
    });
  });
});
