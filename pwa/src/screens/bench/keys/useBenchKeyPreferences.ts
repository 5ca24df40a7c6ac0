// The Bench key preferences of the person using the tablet (kept per person on this tablet).
import { useSession } from '../../../auth/session-context';
import { usePersonSetting } from '../../../auth/person-settings';
import { type BenchKeyPreferences, preferencesFromStored } from './bench-key-map';

export const BENCH_KEYS_SETTING = 'benchKeys';

export function useBenchKeyPreferences(): {
  preferences: BenchKeyPreferences;
  loaded: boolean;
  save: (next: BenchKeyPreferences) => Promise<void>;
} {
  const userId = useSession().user?.id;
  const setting = usePersonSetting(userId, BENCH_KEYS_SETTING, preferencesFromStored);
  return { preferences: setting.value, loaded: setting.loaded, save: setting.save };
}
