import { z } from "zod";
import { roles } from "../roles";

const email = z
  .string({ error: "Enter an e-mail address." })
  .trim()
  .min(1, "Enter an e-mail address.")
  .max(254, "That e-mail address is too long.")
  .email("That does not look like an e-mail address.");

/**
 * The length rule, checked in the browser as the person types and again on the server (OWASP ASVS
 * 4.0.3 V2.1.1: at least 12 characters; V2.1.2: 64 or more allowed). How guessable the password is
 * gets judged on the server only (app/.server/auth/password-strength.ts), against lists too large
 * to send to every browser.
 */
export const PASSWORD_MIN_LENGTH = 12;
export const newPassword = z
  .string({ error: "Choose a password." })
  .min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters.`)
  .max(200, "Use at most 200 characters.");

export const signInSchema = z.object({
  email,
  password: z.string({ error: "Enter your password." }).min(1, "Enter your password.").max(200, "That password is too long."),
  redirectTo: z.string().max(2000).optional(),
});

export const inviteSchema = z.object({
  email,
  name: z.string({ error: "Enter the person's name." }).trim().min(1, "Enter the person's name.").max(120, "Keep the name under 120 characters."),
  role: z.enum(roles, { error: "Choose technician, instructor or lab manager." }),
});

export const roleChangeSchema = z.object({
  userId: z.coerce.number().int().positive(),
  role: z.enum(roles, { error: "Choose technician, instructor or lab manager." }),
});

export const setPasswordSchema = z
  .object({ password: newPassword, confirm: z.string({ error: "Type the password again." }) })
  .refine((v) => v.password === v.confirm, { message: "The two passwords differ.", path: ["confirm"] });

export const changePasswordSchema = z
  .object({
    current: z.string({ error: "Enter your current password." }).min(1, "Enter your current password.").max(200),
    password: newPassword,
    confirm: z.string({ error: "Type the new password again." }),
  })
  .refine((v) => v.password === v.confirm, { message: "The two passwords differ.", path: ["confirm"] });

export const forgotSchema = z.object({ email });

/** How long the single-use links work. */
export const INVITATION_HOURS = 72;
export const RESET_MINUTES = 60;
