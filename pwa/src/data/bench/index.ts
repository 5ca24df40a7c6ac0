// The Bench's data: amblyoscope Sections of one visit, saved through the charting repository.
export * from './bench-sections';
export * from './bench-preferences';
export * from './useBenchSection';
