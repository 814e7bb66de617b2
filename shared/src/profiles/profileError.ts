/** A profile that cannot be used, with the field at fault. Kept apart from the zod schema so the CLI can name it without loading zod. */
export class ProfileError extends Error {
  readonly code = "bad-profile";
  /** Dotted path of the first bad field, or null when the file is not JSON at all. */
  readonly field: string | null;

  constructor(message: string, field: string | null) {
    super(message);
    this.name = "ProfileError";
    this.field = field;
  }
}
