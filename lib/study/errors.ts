/**
 * A study cell whose settings cannot be run: every problem found, keyed by the
 * path of the field in the cell's settings (`parameters.0.values`,
 * `cases.1.initialCoordinates.theta`, `watch.2`), with "_" for the cell as a whole.
 */
export class StudySettingsError extends Error {
  readonly fieldErrors: Record<string, string[]>;

  constructor(fieldErrors: Record<string, string[]>) {
    const first = Object.entries(fieldErrors)[0];
    super(first ? `${first[0] === "_" ? "" : `${first[0]}: `}${first[1][0]}` : "the study settings are not valid");
    this.name = "StudySettingsError";
    this.fieldErrors = fieldErrors;
  }
}
