/** Raised for input a person must correct; the API layer maps it to HTTP 400. */
export class InvalidInputError extends Error {
  code = 'invalid_input' as const;
  constructor(message: string) {
    super(message);
    this.name = 'InvalidInputError';
  }
}
