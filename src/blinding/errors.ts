/**
 * A blinding or unblinding step that cannot go ahead: wrong key, a release already
 * blinded, a key file inside the repository. The command line prints the message and
 * exits 1; nothing was written when this is thrown.
 */
export class BlindingError extends Error {
  readonly hint?: string;
  constructor(message: string, hint?: string) {
    super(message);
    this.name = 'BlindingError';
    this.hint = hint;
  }
}
