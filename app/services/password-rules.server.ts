import { ZxcvbnFactory } from "@zxcvbn-ts/core";
import { adjacencyGraphs, dictionary as commonDictionary } from "@zxcvbn-ts/language-common";
import { dictionary as englishDictionary } from "@zxcvbn-ts/language-en";
import { passwordLengthProblem } from "~/forms/account";

// The rules for a new password (sign-up, and the password-reset and invitation pages):
// 10 characters or more, at most 72 bytes (bcrypt ignores the rest), and not easy to guess.
// "Easy to guess" is zxcvbn's estimate (@zxcvbn-ts): it finds common passwords, words, names,
// dates, keyboard runs and repeats, and the person's own name and e-mail, in any mix; a
// password it scores below 3 of 4 (fewer than 10^8 guesses) is refused. Server only: the word
// lists are megabytes the browser does not need.

/** zxcvbn's score from 0 (a top password) to 4; 3 and 4 resist an offline attack on a slow hash. */
const MIN_SCORE = 3;

let estimator: ZxcvbnFactory | undefined;

/** Built on first use: loading the lists takes about half a second. */
function passwordEstimator(): ZxcvbnFactory {
  estimator ??= new ZxcvbnFactory({
    dictionary: { ...commonDictionary, ...englishDictionary },
    graphs: adjacencyGraphs,
  });
  return estimator;
}

/** Words from the person and the product that an attacker would try with their password. */
function personalWords(person: { email?: string | null; name?: string | null }): string[] {
  const words = new Set<string>(["varroute"]);
  const email = person.email?.trim().toLowerCase();
  if (email) {
    words.add(email);
    const local = email.split("@")[0];
    words.add(local);
    for (const part of local.split(/[^a-z0-9]+/)) if (part.length >= 3) words.add(part);
  }
  const name = person.name?.trim().toLowerCase();
  if (name) {
    words.add(name);
    for (const part of name.split(/\s+/)) if (part.length >= 3) words.add(part);
  }
  return [...words];
}

const NAME_OR_EMAIL = "Leave your name and e-mail address out of the password.";

const lettersAndDigits = (text: string) => text.toLowerCase().replace(/[^\p{L}\p{N}]+/gu, "");

/** Whether the password holds the whole name or the e-mail's name part, whatever the case or separators ("RobinHive2026"). */
function containsOwnName(password: string, person: { email?: string | null; name?: string | null }): boolean {
  const plain = lettersAndDigits(password);
  const own = [person.name ?? "", (person.email ?? "").split("@")[0]].map(lettersAndDigits).filter((word) => word.length >= 4);
  return own.some((word) => plain.includes(word));
}

/**
 * What is wrong with `password` as a new password for this person, or null when it will do.
 * The message is for the password field.
 */
export function passwordProblem(password: string, person: { email?: string | null; name?: string | null } = {}): string | null {
  // Length first: it also bounds the work of the estimate.
  const length = passwordLengthProblem(password);
  if (length) return length;
  if (containsOwnName(password, person)) return NAME_OR_EMAIL;
  const estimate = passwordEstimator().check(password, personalWords(person));
  if (estimate.score >= MIN_SCORE) return null;
  const found = (dictionary: (name: string) => boolean) =>
    estimate.sequence.some((match) => match.pattern === "dictionary" && dictionary(String(match.dictionaryName)));
  if (found((name) => name === "userInputs")) return NAME_OR_EMAIL;
  if (found((name) => name.startsWith("passwords"))) return "This password is on the lists of common passwords that attackers try first. Choose another.";
  return "This password is too easy to guess. Make it longer, for example three or four words that do not belong together.";
}
