/**
 * Password rules for sign-up, password reset and password change: at least 10 characters, at
 * most 72 bytes in UTF-8 (bcrypt reads no further, so a longer password would be cut without a
 * word), and not guessable: @zxcvbn-ts/core with its common and English dictionaries (common
 * passwords, words, names, keyboard walks, dates, repeats) must rate it at least
 * MIN_PASSWORD_SCORE of 4, taking the person's own e-mail address and name into account.
 *
 *   passwordProblem(password, userInputs?) -> string | null   (a sentence saying what to change)
 */
import { ZxcvbnFactory } from '@zxcvbn-ts/core';
import * as common from '@zxcvbn-ts/language-common';
import * as en from '@zxcvbn-ts/language-en';

export const MIN_PASSWORD_CHARS = 10;
export const MAX_PASSWORD_BYTES = 72;
/** zxcvbn score 0-4; 3 means "safely unguessable: moderate protection from offline attack". */
export const MIN_PASSWORD_SCORE = 3;

let checker: ZxcvbnFactory | undefined;
function zxcvbn(): ZxcvbnFactory {
  checker ??= new ZxcvbnFactory({
    dictionary: { ...common.dictionary, ...en.dictionary },
    graphs: common.adjacencyGraphs,
    translations: en.translations,
    // Fewer l33t variants per password: about 7x quicker (tens of ms at most for 72 bytes, on the
    // event loop), and the common l33t spellings are still found.
    l33tMaxSubstitutions: 10,
  });
  return checker;
}

/** The words of an e-mail address and a name, which a password should not be made of. */
export function personalWords(...inputs: Array<string | undefined>): string[] {
  return inputs.flatMap((s) => (s ? [s, ...s.toLowerCase().split(/[^\p{L}\p{N}]+/u).filter((w) => w.length >= 3)] : []));
}

export function passwordProblem(password: string, userInputs: string[] = []): string | null {
  if ([...password].length < MIN_PASSWORD_CHARS) return `Use at least ${MIN_PASSWORD_CHARS} characters.`;
  const bytes = Buffer.byteLength(password, 'utf8');
  if (bytes > MAX_PASSWORD_BYTES) {
    return `Use at most ${MAX_PASSWORD_BYTES} bytes: this password takes ${bytes} (letters outside A-Z take 2 to 4 bytes each). A few unusual words are strong enough.`;
  }
  const result = zxcvbn().check(password, userInputs);
  if (result.score >= MIN_PASSWORD_SCORE) return null;
  const warning = result.feedback.warning ? `${result.feedback.warning.replace(/\.?$/, '.')} ` : '';
  return `This password is too easy to guess. ${warning}Add more words or characters that do not belong together, and avoid names, dates and common phrases.`;
}
