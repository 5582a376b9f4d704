import { Op } from "sequelize";
import { Calibration, Equipment, User, sequelize } from "./db";
import type { CalibrationKind } from "~/lib/calibrations";

export interface CalibrationAwaitingSignOff {
  id: number;
  kind: CalibrationKind;
  equipmentId: number;
  equipmentName: string;
  performedById: number;
  performedByName: string;
  performedAt: string;
}

/**
 * Calibration records not yet signed off (oldest first, at most `limit`) and how many there are in
 * all, from one statement: the count beside the list is a window count over the same rows, so the
 * two always describe the same moment. `performedById` narrows it to one person's records.
 */
export async function listCalibrationsAwaitingSignOff(
  limit: number,
  filter: { performedById?: number } = {},
): Promise<{ items: CalibrationAwaitingSignOff[]; total: number }> {
  const rows = await Calibration.findAll({
    where: { signedOffAt: { [Op.is]: null }, ...(filter.performedById ? { performedById: filter.performedById } : {}) },
    order: [
      ["performedAt", "ASC"],
      ["id", "ASC"],
    ],
    limit,
    attributes: ["id", "kind", "equipmentId", "performedById", "performedAt", [sequelize.literal("COUNT(*) OVER ()"), "matchingTotal"]],
  });
  const equipmentIds = [...new Set(rows.map((r) => r.equipmentId))];
  const userIds = [...new Set(rows.map((r) => r.performedById))];
  const [items, users] = await Promise.all([
    equipmentIds.length ? Equipment.findAll({ where: { id: equipmentIds }, attributes: ["id", "name"] }) : [],
    userIds.length ? User.findAll({ where: { id: userIds }, attributes: ["id", "name"] }) : [],
  ]);
  const itemName = new Map(items.map((i) => [i.id, i.name]));
  const userName = new Map(users.map((u) => [u.id, u.name]));
  const first = rows[0];
  return {
    total: first ? Number(first.get("matchingTotal")) : 0,
    items: rows.map((r) => ({
      id: r.id,
      kind: r.kind,
      equipmentId: r.equipmentId,
      equipmentName: itemName.get(r.equipmentId) ?? `#${r.equipmentId}`,
      performedById: r.performedById,
      performedByName: userName.get(r.performedById) ?? `#${r.performedById}`,
      performedAt: r.performedAt.toISOString(),
    })),
  };
}
