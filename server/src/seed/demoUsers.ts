/** The invented Harbourside Sound Archive staff, one per role. */
import type { Role } from "@tidemark/shared/types/api";
import { User } from "../models/index.ts";
import { DEFAULT_SCRYPT_COST, hashPassword, type ScryptCost } from "../services/passwords.ts";

export const DEMO_USERS: readonly { email: string; name: string; role: Role }[] = [
  { email: "admin@harbourside.test", name: "Ada Quayle", role: "admin" },
  { email: "supervisor@harbourside.test", name: "Morwenna Hale", role: "supervisor" },
  { email: "technician@harbourside.test", name: "Tobias Reed", role: "technician" },
  { email: "auditor@harbourside.test", name: "Ines Farrow", role: "auditor" },
];

export const DEMO_COLLECTIONS = ["Ferry Terminal Interviews 1978", "Lighthouse Choir Reels"] as const;

export { DEFAULT_DEMO_PASSWORD } from "../config.ts";

export async function createDemoUsers(password: string, cost: ScryptCost = DEFAULT_SCRYPT_COST): Promise<Record<Role, User>> {
  const made = {} as Record<Role, User>;
  for (const u of DEMO_USERS) {
    made[u.role] = await User.create({ ...u, passwordHash: await hashPassword(password, cost) });
  }
  return made;
}
