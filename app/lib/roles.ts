export const roles = ["technician", "instructor", "lab_manager"] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  technician: "Technician",
  instructor: "Instructor",
  lab_manager: "Lab manager",
};

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (roles as readonly string[]).includes(value);
}

/**
 * What needs more than being signed in, and who may do it. The server asks `can()` /
 * `requireCapability()` in auth/permissions.ts; pages and the navigation read the same table.
 */
export const capabilityRoles = {
  /** Instructors read calibration records too: they book the equipment and need to see it is calibrated. */
  read_calibrations: ["technician", "instructor", "lab_manager"],
  record_calibration: ["technician", "lab_manager"],
  sign_off_calibration: ["lab_manager"],
} as const satisfies Record<string, readonly Role[]>;
export type Capability = keyof typeof capabilityRoles;

export function roleCan(role: Role, capability: Capability): boolean {
  return (capabilityRoles[capability] as readonly Role[]).includes(role);
}

/** The sections of the app and who may open them; the server checks the same list. */
export const sections = [
  { key: "dashboard", label: "Today", to: "/", roles: ["technician", "instructor", "lab_manager"] },
  { key: "runs", label: "Runs", to: "/runs", roles: ["technician", "instructor", "lab_manager"] },
  { key: "equipment", label: "Equipment", to: "/equipment", roles: ["technician", "instructor", "lab_manager"] },
  { key: "bookings", label: "Bookings", to: "/bookings", roles: ["technician", "instructor", "lab_manager"] },
  { key: "calibrations", label: "Calibrations", to: "/calibrations", roles: capabilityRoles.read_calibrations },
  { key: "people", label: "People", to: "/people", roles: ["lab_manager"] },
  { key: "mail", label: "Captured mail", to: "/mail", roles: ["lab_manager"] },
  { key: "settings", label: "Settings", to: "/settings", roles: ["lab_manager"] },
] as const satisfies readonly { key: string; label: string; to: string; roles: readonly Role[] }[];
