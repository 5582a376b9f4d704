import { randomUUID } from "node:crypto";
import type { Transaction } from "sequelize";
import { LabSetting } from "./db";
import {
  DEFAULT_RATE_SOURCE,
  LAB_ID_SETTING,
  RATE_SOURCE_SETTING,
  RATE_SOURCES,
  SIGN_OFF_SETTING,
  TIME_ZONE_SETTING,
  settingDefaults,
  settingLimits,
  timeZoneError,
  type LabSettings,
  type RateSource,
  type SettingKey,
  type SignOffRule,
} from "~/lib/settings";
import { isTimeZone, systemTimeZone } from "~/lib/time-format";

export async function getLabSettings(transaction?: Transaction): Promise<LabSettings> {
  const rows = await LabSetting.findAll({ transaction });
  const settings: LabSettings = {
    ...settingDefaults,
    timeZone: systemTimeZone(),
    timeZoneIsServerDefault: true,
    rateSource: DEFAULT_RATE_SOURCE,
    signOffBySecondPerson: true,
  };
  for (const row of rows) {
    if (row.key in settingDefaults) {
      const value = Number(row.value);
      if (Number.isFinite(value)) settings[row.key as SettingKey] = value;
    } else if (row.key === TIME_ZONE_SETTING && isTimeZone(row.value)) {
      settings.timeZone = row.value;
      settings.timeZoneIsServerDefault = false;
    } else if (row.key === RATE_SOURCE_SETTING && (RATE_SOURCES as readonly string[]).includes(row.value)) {
      settings.rateSource = row.value as RateSource;
    } else if (row.key === SIGN_OFF_SETTING) {
      // Only the word that turns it off does: a damaged row keeps the safer rule.
      settings.signOffBySecondPerson = row.value !== "anyone";
    }
  }
  return settings;
}

/** The lab's time zone: the one set on the settings page, or the server's until one is set. */
export async function getLabTimeZone(transaction?: Transaction): Promise<string> {
  const row = await LabSetting.findByPk(TIME_ZONE_SETTING, { transaction });
  return row && isTimeZone(row.value) ? row.value : systemTimeZone();
}

export async function setLabSetting(key: SettingKey, value: number) {
  const limits = settingLimits[key];
  if (!Number.isFinite(value) || value < limits.min || value > limits.max) {
    throw new RangeError(`${limits.label} must be between ${limits.min} and ${limits.max} ${limits.unit}.`);
  }
  // The key is the primary key: INSERT … ON CONFLICT (key) DO UPDATE, so two saves at once leave one row.
  await LabSetting.upsert({ key, value: String(value) });
}

/** Which rate the theory check uses when the footage gave one too; the default removes the row. */
export async function setLabRateSource(value: RateSource) {
  if (!RATE_SOURCES.includes(value)) throw new RangeError(`"${String(value)}" is not a rate the check can use: choose ${RATE_SOURCES.join(" or ")}.`);
  if (value === DEFAULT_RATE_SOURCE) await LabSetting.destroy({ where: { key: RATE_SOURCE_SETTING } });
  else await LabSetting.upsert({ key: RATE_SOURCE_SETTING, value });
}

/** Whether a calibration needs a second person to sign it off; the default (a second person) removes the row. */
export async function setSignOffRule(rule: SignOffRule) {
  if (rule === "second_person") await LabSetting.destroy({ where: { key: SIGN_OFF_SETTING } });
  else if (rule === "anyone") await LabSetting.upsert({ key: SIGN_OFF_SETTING, value: rule });
  else throw new RangeError(`"${String(rule)}" is not a sign-off rule: choose second_person or anyone.`);
}

/** Sets the lab's time zone (an IANA name or UTC); an empty name goes back to the server's zone. */
export async function setLabTimeZone(name: string) {
  const zone = name.trim();
  if (zone === "") {
    await LabSetting.destroy({ where: { key: TIME_ZONE_SETTING } });
    return;
  }
  if (!isTimeZone(zone)) throw new RangeError(timeZoneError(zone));
  await LabSetting.upsert({ key: TIME_ZONE_SETTING, value: zone });
}

/**
 * The lab's own identifier: a random UUID stored once (migration 0012) and never changed, so what
 * is built from it (iCalendar UIDs) survives a new address or host name. Should the row be missing
 * (a database restored without it), one is made; INSERT … ON CONFLICT DO NOTHING keeps the first.
 */
export async function getLabId(transaction?: Transaction): Promise<string> {
  const row = await LabSetting.findByPk(LAB_ID_SETTING, { transaction });
  if (row) return row.value;
  await LabSetting.bulkCreate([{ key: LAB_ID_SETTING, value: randomUUID() }], { ignoreDuplicates: true, transaction });
  const made = await LabSetting.findByPk(LAB_ID_SETTING, { transaction });
  if (!made) throw new Error("the lab identifier could not be stored");
  return made.value;
}
