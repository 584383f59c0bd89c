/**
 * Errors a user can cause (bad file, wrong CRS, impossible height...).
 *
 * Library code throws `InputError` with one message that names the file, the
 * feature and the fix; the CLI prints it and exits non-zero. Any other error
 * is a bug in pondage.
 */
export class InputError extends Error {
  override readonly name = 'InputError';
  constructor(message: string) {
    super(message);
  }
}

/** A per-dam or per-file problem that does not stop the run; it is reported. */
export interface Warning {
  /** Stable machine-readable code, e.g. `crest-over-nodata`. */
  code: string;
  /** One sentence for a person: what, where, and what to do. */
  message: string;
  /** Dam id, when the warning belongs to one dam. */
  damId?: string;
}
