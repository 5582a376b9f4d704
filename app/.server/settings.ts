import type { Transaction } from "sequelize";
import { LabSetting } from "./db";
import { settingDefaults, settingLimits, type LabSettings, type SettingKey } from "~/lib/settings";

export async function getLabSettings(transaction?: Transaction): Promise<LabSettings> {
  const rows = await LabSetting.findAll({ transaction });
  const settings: LabSettings = { ...settingDefaults };
  for (const row of rows) {
    if (row.key in settingDefaults) {
      const value = Number(row.value);
      if (Number.isFinite(value)) settings[row.key as SettingKey] = value;
    }
  }
  return settings;
}

export async function setLabSetting(key: SettingKey, value: number) {
  const limits = settingLimits[key];
  if (!Number.isFinite(value) || value < limits.min || value > limits.max) {
    throw new RangeError(`${limits.label} must be between ${limits.min} and ${limits.max} ${limits.unit}.`);
  }
  // The key is the primary key: INSERT … ON CONFLICT (key) DO UPDATE, so two saves at once leave one row.
  await LabSetting.upsert({ key, value: String(value) });
}
