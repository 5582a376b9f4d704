import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { User } from "../db";
import { burnPasswordCheck, verifyPassword } from "./password";
import { formText } from "~/lib/form-text";

export const SIGN_IN_FAILED = "That e-mail and password do not match an active account.";

export class SignInError extends Error {}

export interface SignedInUser {
  id: number;
  email: string;
  name: string;
  role: User["role"];
}

export const authenticator = new Authenticator<SignedInUser>();

authenticator.use(
  new FormStrategy(async ({ form }) => {
    const email = formText(form, "email").trim().toLowerCase();
    const password = formText(form, "password");
    const user = await User.findOne({ where: { email } });
    if (!user || !user.active || !user.passwordHash) {
      await burnPasswordCheck(password);
      throw new SignInError(SIGN_IN_FAILED);
    }
    if (!(await verifyPassword(user.passwordHash, password))) throw new SignInError(SIGN_IN_FAILED);
    return { id: user.id, email: user.email, name: user.name, role: user.role };
  }),
  "form",
);
