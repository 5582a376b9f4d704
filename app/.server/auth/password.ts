import argon2 from "argon2";

/**
 * argon2id with the OWASP Password Storage Cheat Sheet's first recommended set:
 * 19 MiB of memory, 2 iterations, 1 degree of parallelism.
 */
export const argon2Options = {
  type: argon2.argon2id,
  memoryCost: 19 * 1024,
  timeCost: 2,
  parallelism: 1,
} as const;

export const passwordRules = { min: 12, max: 200 } as const;

export function hashPassword(password: string): Promise<string> {
  return argon2.hash(password, argon2Options);
}

export async function verifyPassword(hash: string, password: string): Promise<boolean> {
  try {
    return await argon2.verify(hash, password);
  } catch {
    return false;
  }
}

// Used when no such account exists, so a wrong e-mail costs the same time as a wrong password.
let dummyHash: Promise<string> | null = null;
export async function burnPasswordCheck(password: string): Promise<void> {
  dummyHash ??= hashPassword("tankside-no-such-account");
  await verifyPassword(await dummyHash, password);
}
