export const PASSWORD_MIN_CHARACTERS = 10;
/** bcrypt reads only the first 72 bytes; a longer password would be cut short without a word. */
export const PASSWORD_MAX_BYTES = 72;

/** What is wrong with a new password, in words for the form; undefined when it may be used. */
export function passwordProblem(password: string, email: string | undefined): string | undefined {
  const characters = [...password];
  if (characters.length < PASSWORD_MIN_CHARACTERS) return `must be at least ${PASSWORD_MIN_CHARACTERS} characters`;
  if (Buffer.byteLength(password, 'utf8') > PASSWORD_MAX_BYTES) {
    return `must be at most ${PASSWORD_MAX_BYTES} bytes (72 plain letters, fewer with accents or symbols)`;
  }
  if (new Set(characters).size === 1) return 'must not be one character repeated';
  if (email) {
    const lowered = password.trim().toLowerCase();
    const address = email.trim().toLowerCase();
    const name = address.split('@')[0] ?? '';
    if (lowered === address || lowered === name) return 'must not be your e-mail address';
  }
  return undefined;
}
