import bcrypt from "bcryptjs";

const cost = 10;

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, cost);
}

export function verifyPassword(password: string, passwordHash: string): Promise<boolean> {
  return bcrypt.compare(password, passwordHash);
}

let dummyHash: string | undefined;

/**
 * Spends the same bcrypt time as a real check when the e-mail is unknown, so a
 * miss does not reveal which addresses have accounts.
 */
export async function verifyAgainstDummy(password: string): Promise<false> {
  dummyHash ??= await bcrypt.hash("holonomy-timing-equaliser", cost);
  await bcrypt.compare(password, dummyHash);
  return false;
}
