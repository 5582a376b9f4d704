import { ZxcvbnFactory, type ZxcvbnResult } from "@zxcvbn-ts/core";
import { adjacencyGraphs, dictionary as commonDictionary } from "@zxcvbn-ts/language-common";
import { dictionary as englishDictionary, translations } from "@zxcvbn-ts/language-en";

/**
 * How guessable a new password is, judged by zxcvbn-ts against its maintained lists of common and
 * breached passwords, English words and names, keyboard patterns and dates (OWASP ASVS 4.0.3 V2.1.7).
 * Server-side only: with its dictionaries it is 1.66 MB minified (0.85 MB gzipped), too much for
 * the browser; the form there checks the length rule alone (see Decisions).
 */

/** zxcvbn's score 3: at least 10^8 guesses, its "safely unguessable" band for a slowly hashed password. */
export const MIN_SCORE = 3;

/** Words everyone would try first against this lab. */
const labWords = ["tankside", "rotating", "coriolis", "table", "tank", "lab", "physics", "fluids"];
/** A textbook example passphrase, printed everywhere, which zxcvbn's own lists score as strong. */
const famousExamples = ["correcthorsebatterystaple"];

let factory: ZxcvbnFactory | null = null;
function zxcvbn() {
  // Built on first use: loading the dictionaries takes a moment that only password changes pay.
  factory ??= new ZxcvbnFactory({
    translations,
    graphs: adjacencyGraphs,
    dictionary: { ...commonDictionary, ...englishDictionary, lab: labWords, famous: famousExamples },
    // Only the first 64 characters are judged: a patterned 200-character password took 1.4 s,
    // blocking the server, and about 0.5 s at this length; 64 characters that pass are strong
    // whatever follows.
    maxLength: 64,
  });
  return factory;
}

export interface PasswordOwner {
  email: string;
  name: string;
}

/** The pieces of a person's e-mail address and name that a guesser tries with the password. */
export function personalWords(owner: PasswordOwner): string[] {
  const email = owner.email.toLowerCase();
  const [local = "", domain = ""] = email.split("@");
  const name = owner.name.toLowerCase();
  const joined = (s: string) => s.replace(/[^\p{L}\p{N}]+/gu, "");
  const pieces = [email, local, joined(local), domain, ...local.split(/[^a-z0-9]+/), ...domain.split("."), name, joined(name), ...name.split(/\s+/)];
  return [...new Set(pieces.filter((w) => w.length >= 3 && w !== "example" && w !== "com"))];
}

function explain(result: ZxcvbnResult): string {
  const parts = [result.feedback.warning, ...result.feedback.suggestions].filter((s): s is string => Boolean(s));
  return parts.join(" ");
}

/**
 * Why this password would be refused, in plain words, or null when it is fine. The length rule
 * (12 to 200 characters, OWASP ASVS 4.0.3 V2.1.1 and V2.1.2) is the shared form schema's job;
 * this adds what only a dictionary can tell.
 */
export function passwordProblem(password: string, owner: PasswordOwner): string | null {
  const own = personalWords(owner);
  const result = zxcvbn().check(password, own);
  const personal =
    "This password is built on your name, your e-mail address or the lab's name, which anyone would try first. Use words that have nothing to do with you or Tankside.";
  const from = (names: string[]) => result.sequence.some((m) => "dictionaryName" in m && names.includes(String(m.dictionaryName)));
  if (result.score < MIN_SCORE && from(["famous"])) return "This is a well-known example passphrase, printed in many places, so it is among the first tried.";
  if (result.score < MIN_SCORE && from(["userInputs", "lab"])) return personal;
  if (result.score < MIN_SCORE) {
    const why = explain(result);
    return `This password is too easy to guess. ${why || "Add a few more uncommon words."}`.trim();
  }
  // zxcvbn prices the separators between known words as random characters, so "jane.doe.tankside"
  // scores well. Judge what is left once the person's own words and the lab's name are taken out.
  const lowered = password.toLowerCase();
  let rest = lowered;
  for (const word of [...own, "tankside"].sort((a, b) => b.length - a.length)) rest = rest.split(word).join(" ");
  // Separators left behind are not counted either: they are what people put between such words.
  if (rest !== lowered && zxcvbn().check(rest.replace(/[^\p{L}\p{N}]+/gu, ""), own).score < MIN_SCORE) {
    return personal;
  }
  return null;
}
