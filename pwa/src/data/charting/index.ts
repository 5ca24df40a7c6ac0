// The charting screens' data: domain queries and edits on the generic records repository.
export * from './charting-repository';
export * from './charting-hooks';
export * from './visit-rules';
