import { User } from "../db";
import { hashPassword } from "../auth/password";
import type { Role } from "~/lib/roles";

export const DEMO_PASSWORD = "tankside-demo";

/** The invented lab's people. */
export const demoPeople: { email: string; name: string; role: Role }[] = [
  { email: "manager@tankside.example", name: "Maren Okafor", role: "lab_manager" },
  { email: "tech@tankside.example", name: "Tomas Riedel", role: "technician" },
  { email: "instructor@tankside.example", name: "Ines Halvorsen", role: "instructor" },
  { email: "tech2@tankside.example", name: "Priya Castellanos", role: "technician" },
  { email: "instructor2@tankside.example", name: "Jonah Whitlock", role: "instructor" },
];

export async function seedPeople() {
  const hash = await hashPassword(DEMO_PASSWORD);
  const created: User[] = [];
  for (const p of demoPeople) {
    const [user] = await User.findOrCreate({
      where: { email: p.email },
      defaults: { ...p, passwordHash: hash, passwordChangedAt: new Date() },
    });
    created.push(user);
  }
  return created;
}
