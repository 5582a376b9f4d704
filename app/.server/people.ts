import { Op, UniqueConstraintError, type Transaction } from "sequelize";
import { AuthToken, User, locking, sequelize } from "./db";
import type { AuthTokenPurpose } from "./db/models/auth-token";
import { env } from "./env";
import { onBoot } from "./boot";
import { hashPassword, verifyPassword } from "./auth/password";
import { hashToken, newSecretToken } from "./auth/tokens";
import { afterDeactivation, afterPasswordChange } from "./auth/credential-changes";
import { enqueueMail, mailQueued, type MailQueued } from "./mail/outbox";
import { roleLabels, type Role } from "~/lib/roles";
import { INVITATION_HOURS, RESET_MINUTES } from "~/lib/validation/people";
import { formatDuration, timeFormat } from "~/lib/time-format";
import { getLabTimeZone } from "./settings";
export { INVITATION_HOURS, RESET_MINUTES };

export class PeopleError extends Error {
  constructor(
    message: string,
    readonly field?: string,
    readonly status = 400,
  ) {
    super(message);
  }
}

export function listPeople() {
  return User.findAll({
    order: [
      ["active", "DESC"],
      ["name", "ASC"],
    ],
  });
}

function newLinkSecret() {
  const token = newSecretToken();
  return { token, hash: hashToken(token) };
}

async function issueToken(
  userId: number,
  purpose: AuthTokenPurpose,
  minutes: number,
  createdById: number | null,
  transaction?: Transaction,
  secret = newLinkSecret(),
) {
  // Any earlier link of the same purpose stops working once a new one is sent.
  await AuthToken.update({ usedAt: new Date() }, { where: { userId, purpose, usedAt: { [Op.is]: null } }, transaction });
  const row = await AuthToken.create(
    {
      userId,
      purpose,
      tokenHash: secret.hash,
      expiresAt: new Date(Date.now() + minutes * 60_000),
      usedAt: null,
      createdById,
    },
    { transaction },
  );
  return { token: secret.token, expiresAt: row.expiresAt };
}

/** "for 72 h (until 6 Dec 2026, 09:50 CET)": how long a link works and when it stops, on the lab's clock. */
async function linkLifetime(minutes: number, expiresAt: Date, transaction?: Transaction) {
  return `for ${formatDuration(minutes * 60)} (until ${timeFormat(await getLabTimeZone(transaction)).dateTime(expiresAt)})`;
}

/**
 * The unique index on e-mail decides who is already on the list: of two invitations of one address
 * at once, on either database, one is saved and the other refused.
 */
async function createUnlessListed(person: { email: string; name: string; role: Role }, transaction: Transaction) {
  try {
    return await User.create({ ...person, passwordHash: null, passwordChangedAt: null }, { transaction });
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw new PeopleError("Someone with that e-mail address is already on the list.", "email", 409);
    throw err;
  }
}

export async function invitePerson(
  input: { email: string; name: string; role: Role },
  invitedBy: { id: number; name: string },
): Promise<{ user: User; mail: MailQueued }> {
  const email = input.email.trim().toLowerCase();
  // The person, their link and the invitation e-mail are saved together or not at all.
  return sequelize.transaction(async (transaction) => {
    const user = await createUnlessListed({ email, name: input.name.trim(), role: input.role }, transaction);
    const { token, expiresAt } = await issueToken(user.id, "invitation", INVITATION_HOURS * 60, invitedBy.id, transaction);
    const link = `${env.appUrl}/welcome/${token}`;
    const lifetime = await linkLifetime(INVITATION_HOURS * 60, expiresAt, transaction);
    const mail = await enqueueMail(
      {
        to: email,
        subject: "You are invited to Tankside",
        text: [
          `Hello ${user.name},`,
          "",
          `${invitedBy.name} has added you to Tankside, the lab's run log, as ${roleLabels[input.role].toLowerCase()}.`,
          `Choose your password here (the link works once, ${lifetime}):`,
          "",
          link,
          "",
          "If you did not expect this, you can ignore this message.",
        ].join("\n"),
      },
      { transaction },
    );
    return { user, mail: mailQueued(mail) };
  });
}

export async function resendInvitation(userId: number, invitedBy: { id: number; name: string }): Promise<MailQueued> {
  return sequelize.transaction(async (transaction) => {
    const user = await User.findByPk(userId, { transaction });
    if (!user) throw new PeopleError("No such person.", undefined, 404);
    if (user.passwordHash) throw new PeopleError(`${user.name} has already chosen a password.`, undefined, 409);
    const { token, expiresAt } = await issueToken(user.id, "invitation", INVITATION_HOURS * 60, invitedBy.id, transaction);
    const lifetime = await linkLifetime(INVITATION_HOURS * 60, expiresAt, transaction);
    const mail = await enqueueMail(
      {
        to: user.email,
        subject: "Your Tankside invitation (sent again)",
        text: `Hello ${user.name},\n\nChoose your Tankside password here (works once, ${lifetime}):\n\n${env.appUrl}/welcome/${token}\n`,
      },
      { transaction },
    );
    return mailQueued(mail);
  });
}

/** Finds a usable token without spending it; null when unknown, used or expired. */
export async function findUsableToken(token: string, purpose: AuthTokenPurpose) {
  if (!token || token.length > 200) return null;
  const row = await AuthToken.findOne({ where: { tokenHash: hashToken(token), purpose } });
  if (!row || row.usedAt || row.expiresAt.getTime() < Date.now()) return null;
  const user = await User.findByPk(row.userId);
  if (!user || !user.active) return null;
  return { row, user };
}

/** Spends the token and sets the password, in one transaction so a link can never work twice. */
export async function setPasswordWithToken(token: string, purpose: AuthTokenPurpose, password: string) {
  const passwordHash = await hashPassword(password);
  return sequelize
    .transaction(async (transaction) => {
      const row = await AuthToken.findOne({ where: { tokenHash: hashToken(token), purpose }, transaction });
      if (!row || row.usedAt || row.expiresAt.getTime() < Date.now()) {
        throw new PeopleError("This link has expired or has already been used. Ask for a new one.", undefined, 410);
      }
      const [spent] = await AuthToken.update({ usedAt: new Date() }, { where: { id: row.id, usedAt: { [Op.is]: null } }, transaction });
      if (spent !== 1) throw new PeopleError("This link has already been used.", undefined, 410);
      const user = await User.findByPk(row.userId, { transaction });
      if (!user || !user.active) throw new PeopleError("This account is not active.", undefined, 410);
      await user.update({ passwordHash, passwordChangedAt: new Date() }, { transaction });
      return user;
    })
    .then(async (user) => {
      await afterPasswordChange(user, { via: purpose === "password_reset" ? "reset" : "invitation" });
      return user;
    });
}

const resetsUnderWay = new Set<Promise<void>>();
/**
 * The link is written this long after the lookup: by then the answer has been rendered and sent,
 * so neither the write nor the delivery it wakes shares the event loop with it (with the write
 * started at once, a real account still answered 2.8 ms slower over HTTP, median of 200).
 */
const RESET_WRITE_DELAY_MS = 250;

/**
 * Asks for a reset link; answers the same, in the same time, for every address (OWASP ASVS 4.0.3
 * V2.5.7; common practice). The request itself always makes a token and its hash and runs one
 * transaction that looks the address up. Only for an active account is the link then written,
 * token and outbox row in one transaction of their own, once the answer is on its way: those
 * writes, and the delivery they wake, were what made a real account measurably slower. A crash in between loses nothing that
 * was promised: the person simply asks again.
 */
export async function requestPasswordReset(emailInput: string): Promise<void> {
  const email = emailInput.trim().toLowerCase();
  const secret = newLinkSecret();
  const user = await sequelize.transaction((transaction) => User.findOne({ where: { email, active: true }, transaction }));
  if (!user) return;
  const work = new Promise<void>((resolve) => setTimeout(resolve, RESET_WRITE_DELAY_MS))
    .then(() => queueResetLink(user, secret))
    .catch((err) => console.error("[people] could not queue a reset link:", err))
    .finally(() => resetsUnderWay.delete(work));
  resetsUnderWay.add(work);
}

async function queueResetLink(user: User, secret: ReturnType<typeof newLinkSecret>) {
  await sequelize.transaction(async (transaction) => {
    const { token, expiresAt } = await issueToken(user.id, "password_reset", RESET_MINUTES, null, transaction, secret);
    const lifetime = await linkLifetime(RESET_MINUTES, expiresAt, transaction);
    await enqueueMail(
      {
        to: user.email,
        subject: "Reset your Tankside password",
        text: [
          `Hello ${user.name},`,
          "",
          "Someone (we hope you) asked to reset your Tankside password. Choose a new one here:",
          "",
          `${env.appUrl}/reset-password/${token}`,
          "",
          `The link works once, ${lifetime}. If you did not ask, ignore this message; your password stays as it is.`,
        ].join("\n"),
      },
      { transaction },
    );
  });
}

/** Resolves once every reset link asked for so far is written (tests, shutdown). */
export async function passwordResetsSettled() {
  await Promise.all([...resetsUnderWay]);
}

// A clean stop writes the reset links already promised before the database closes.
onBoot({ name: "password-resets", start: () => undefined, stop: passwordResetsSettled });

export async function changeOwnPassword(userId: number, current: string, next: string, keepSessionId?: string) {
  const user = await User.findByPk(userId);
  if (!user || !user.passwordHash) throw new PeopleError("No such account.", undefined, 404);
  if (!(await verifyPassword(user.passwordHash, current))) {
    throw new PeopleError("Your current password is not right.", "current");
  }
  await user.update({ passwordHash: await hashPassword(next), passwordChangedAt: new Date() });
  await afterPasswordChange(user, { via: "account", keepSessionId });
}

/**
 * Managers who can actually sign in: active and with a password chosen (an unanswered invitation
 * does not count). Their rows stay locked until the transaction ends, taken in id order: of two
 * changes at once that would each leave one manager (demoting A, deactivating B), the second waits,
 * counts again without the first one's person, and is refused.
 */
async function usableManagerCount(transaction: Transaction) {
  const managers = await User.findAll({
    where: { role: "lab_manager", active: true, passwordHash: { [Op.ne]: null } },
    attributes: ["id"],
    order: [["id", "ASC"]],
    ...locking(transaction),
  });
  return managers.length;
}

/** Whether taking this person out of the lab-manager role (or deactivating them) would leave no manager able to sign in. */
async function isLastUsableManager(user: User, transaction: Transaction) {
  if (user.role !== "lab_manager" || !user.active || !user.passwordHash) return false;
  return (await usableManagerCount(transaction)) <= 1;
}

export async function changeRole(userId: number, role: Role) {
  await sequelize.transaction(async (transaction) => {
    const user = await User.findByPk(userId, { transaction });
    if (!user) throw new PeopleError("No such person.", undefined, 404);
    if (role !== "lab_manager" && (await isLastUsableManager(user, transaction))) {
      throw new PeopleError("The lab needs at least one active lab manager: make someone else lab manager first.", "role", 409);
    }
    await user.update({ role }, { transaction });
  });
}

export async function setActive(userId: number, active: boolean) {
  await sequelize.transaction(async (transaction) => {
    const user = await User.findByPk(userId, { transaction });
    if (!user) throw new PeopleError("No such person.", undefined, 404);
    if (!active && (await isLastUsableManager(user, transaction))) {
      throw new PeopleError("You cannot deactivate the last active lab manager.", undefined, 409);
    }
    await user.update({ active }, { transaction });
  });
  if (!active) await afterDeactivation(userId);
}

/**
 * For a new installation: adds a lab manager (or finds the invited one) and returns a single-use
 * link to choose a password, to be handed over in person. Refuses once anyone has signed in.
 */
export async function firstManagerLink(emailInput: string, name: string): Promise<string> {
  const email = emailInput.trim().toLowerCase();
  if (await User.count({ where: { passwordHash: { [Op.ne]: null } } })) {
    throw new PeopleError("People already use this Tankside: a lab manager invites new people from the People page.");
  }
  const [user] = await User.findOrCreate({ where: { email }, defaults: { email, name, role: "lab_manager", passwordHash: null, passwordChangedAt: null } });
  if (user.role !== "lab_manager") await user.update({ role: "lab_manager" });
  const { token } = await issueToken(user.id, "invitation", INVITATION_HOURS * 60, null);
  return `${env.appUrl}/welcome/${token}`;
}
