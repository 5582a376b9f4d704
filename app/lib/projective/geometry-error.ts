/** Marks that cannot give a correction (too few, in a line, not an ellipse): the message says which, in words for the technician. */
export class GeometryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "GeometryError";
  }
}
