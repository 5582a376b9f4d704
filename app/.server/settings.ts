import { LabSetting } from "./db";
import { settingDefaults, settingLimits, type LabSettings, type SettingKey } from "~/lib/settings";

export async function getLabSettings(): Promise<LabSettings> {
  const rows = await LabSetting.findAll();
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
  await LabSetting.upsert({ key, value: String(value) });
}
