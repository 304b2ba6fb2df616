/** Thrown for any bad image input; `message` is a one-line, user-readable sentence quoting the value received. */
export class ImageInputError extends Error {
  constructor(message: string, public readonly status = 422) {
    super(message);
    this.name = 'ImageInputError';
  }
}
