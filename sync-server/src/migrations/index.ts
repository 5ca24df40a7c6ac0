// Every committed migration, in order. The server is bundled, so MikroORM's migrator gets this
// list instead of scanning a folder. Add a new migration at the end; never edit an applied one.
import type { MigrationObject } from '@mikro-orm/core';
import { Migration20261201000000Sites } from './Migration20261201000000Sites';
import { Migration20261201010000Identity } from './Migration20261201010000Identity';
import { Migration20261201020000SyncRecords } from './Migration20261201020000SyncRecords';
import { Migration20261201040000ReviewDesk } from './Migration20261201040000ReviewDesk';
import { Migration20261201050000LettersMail } from './Migration20261201050000LettersMail';
import { Migration20261201050100FinalLetterGuard } from './Migration20261201050100FinalLetterGuard';
import { Migration20261201060000AddendumRecords } from './Migration20261201060000AddendumRecords';
import { Migration20261202000000SupersededHistory } from './Migration20261202000000SupersededHistory';
import { Migration20261204000000VersionOffsetAndCursorEpoch } from './Migration20261204000000VersionOffsetAndCursorEpoch';
import { Migration20261204100000OpenDisputeOrder } from './Migration20261204100000OpenDisputeOrder';
import { Migration20261204300000ClinicSettings } from './Migration20261204300000ClinicSettings';
import { Migration20261205000000RestoreTimeline } from './Migration20261205000000RestoreTimeline';
import { Migration20261205000000FhirHandoff } from './Migration20261205000000FhirHandoff';
import { Migration20261206000000DeviceKeyProtection } from './Migration20261206000000DeviceKeyProtection';
import { Migration20261207000000AddendumWrittenByResolution } from './Migration20261207000000AddendumWrittenByResolution';

export const migrationsList: MigrationObject[] = [
  { name: 'Migration20261201000000Sites', class: Migration20261201000000Sites },
  { name: 'Migration20261201010000Identity', class: Migration20261201010000Identity },
  { name: 'Migration20261201020000SyncRecords', class: Migration20261201020000SyncRecords },
  { name: 'Migration20261201040000ReviewDesk', class: Migration20261201040000ReviewDesk },
  { name: 'Migration20261201050000LettersMail', class: Migration20261201050000LettersMail },
  {
    name: 'Migration20261201050100FinalLetterGuard',
    class: Migration20261201050100FinalLetterGuard,
  },
  { name: 'Migration20261201060000AddendumRecords', class: Migration20261201060000AddendumRecords },
  {
    name: 'Migration20261202000000SupersededHistory',
    class: Migration20261202000000SupersededHistory,
  },
  {
    name: 'Migration20261204000000VersionOffsetAndCursorEpoch',
    class: Migration20261204000000VersionOffsetAndCursorEpoch,
  },
  {
    name: 'Migration20261204100000OpenDisputeOrder',
    class: Migration20261204100000OpenDisputeOrder,
  },
  {
    name: 'Migration20261204300000ClinicSettings',
    class: Migration20261204300000ClinicSettings,
  },
  {
    name: 'Migration20261205000000RestoreTimeline',
    class: Migration20261205000000RestoreTimeline,
  },
  { name: 'Migration20261205000000FhirHandoff', class: Migration20261205000000FhirHandoff },
  {
    name: 'Migration20261206000000DeviceKeyProtection',
    class: Migration20261206000000DeviceKeyProtection,
  },
  {
    name: 'Migration20261207000000AddendumWrittenByResolution',
    class: Migration20261207000000AddendumWrittenByResolution,
  },
];
