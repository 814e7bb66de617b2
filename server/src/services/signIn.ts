import { Sequelize } from "sequelize";
import { User } from "../models/index.ts";
import { dummyPasswordHash, verifyPassword, type ScryptCost } from "./passwords.ts";

export function findUserByEmail(email: string): Promise<User | null> {
  return User.findOne({ where: Sequelize.where(Sequelize.fn("lower", Sequelize.col("email")), email.trim().toLowerCase()) });
}

/**
 * The user when e-mail and password match an active account, else null. An unknown address costs one
 * scrypt like a known one, so response time does not reveal which addresses exist.
 */
export async function signIn(email: string, password: string, cost: ScryptCost): Promise<User | null> {
  const user = await findUserByEmail(email);
  const ok = await verifyPassword(password, user?.passwordHash ?? (await dummyPasswordHash(cost)));
  return user && ok && !user.disabled ? user : null;
}
