/**
 * Weak-password patterns (common practice, not a published list): one repeated character, a run of
 * keyboard or alphabet sequence, or a common word with digits around it.
 */
const sequences = ["0123456789", "abcdefghijklmnopqrstuvwxyz", "qwertyuiop", "asdfghjkl", "zxcvbnm"];
const commonWords = ["password", "passwort", "letmein", "welcome", "qwerty", "admin", "tankside", "iloveyou", "monkey", "dragon"];

export function weakPasswordReason(password: string): string | null {
  const p = password.toLowerCase();
  if (/^(.)\1*$/.test(p) || /^(.{1,3})\1+$/.test(p)) return "Do not use a repeated character or group.";
  const letters = p.replace(/[^a-z0-9]/g, "");
  for (const seq of sequences) {
    const all = seq + " " + [...seq].reverse().join("");
    // Mostly a sequence: 8 or more of its characters in order.
    for (let i = 0; i + 8 <= letters.length; i++) if (all.includes(letters.slice(i, i + 8))) return "Do not use a sequence like 12345678 or abcdefgh.";
  }
  const core = p.replace(/[^a-z]/g, "");
  if (commonWords.includes(core)) return "That is a very common password: use a short sentence instead.";
  return null;
}
