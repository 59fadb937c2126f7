/** Quotes one word for /bin/sh, which is how pg_ctl passes its `-o` options to the server. */
export function shellQuote(word: string): string {
  return /^[A-Za-z0-9_\-./=:,@]+$/.test(word) ? word : `'${word.replaceAll("'", `'\\''`)}'`
}
