import type { DbOrTx } from "@/lib/db/client";
import { defaultSettings, settingsSchemas, type Settings, type SettingsKey } from "@/lib/settings/schemas";

/** All settings groups, each the stored value or its default. A stored value that no longer
 * parses (an older shape) falls back to the default rather than breaking every screen. */
export async function getSettings(db: DbOrTx): Promise<Settings> {
  const rows = await db.setting.findMany();
  const settings: Settings = structuredClone(defaultSettings);
  for (const row of rows) {
    if (!(row.key in settingsSchemas)) continue;
    const key = row.key as SettingsKey;
    (settings as Record<SettingsKey, unknown>)[key] = settingsGroupOf(key, row.value);
  }
  return settings;
}

/** One group from its stored value (undefined when none is stored), by the same rule as getSettings. */
export function settingsGroupOf<K extends SettingsKey>(key: K, stored: unknown): Settings[K] {
  const parsed = settingsSchemas[key].safeParse(stored);
  return parsed.success ? (parsed.data as Settings[K]) : structuredClone(defaultSettings[key]);
}
