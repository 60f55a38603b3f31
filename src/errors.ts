/**
 * The one error class of peculiar. Library code throws it for input that cannot be used
 * (a file that cannot be read, an option out of range); kernels never throw per row, they flag.
 * Only the CLI entry catches it and prints `message` as one line.
 */
export type ErrorCode =
  | "usage" // bad command line or option value
  | "io" // file missing, unreadable, unwritable
  | "format" // file readable but not in the expected format (truncated, malformed)
  | "input" // a value in a file is wrong in a way that stops the whole job
  | "column" // a needed column is missing or ambiguous
  | "range" // an argument is outside its allowed range
  | "step"; // a pipeline step failed (wraps the cause)

export interface ErrorPlace {
  file?: string;
  /** 1-based line number in a text file, or 1-based row number in a binary table. */
  row?: number;
  column?: string;
  value?: unknown;
  expected?: string;
}

export class PeculiarError extends Error {
  readonly code: ErrorCode;
  readonly place: ErrorPlace;

  constructor(code: ErrorCode, message: string, place: ErrorPlace = {}, options?: { cause?: unknown }) {
    super(formatMessage(message, place), options);
    this.name = "PeculiarError";
    this.code = code;
    this.place = place;
  }
}

function formatMessage(message: string, p: ErrorPlace): string {
  let where = "";
  if (p.file !== undefined) where += p.file;
  if (p.row !== undefined) where += `${where ? ":" : "row "}${p.row}`;
  if (p.column !== undefined) where += `${where ? " " : ""}column ${p.column}`;
  let text = where ? `${where}: ${message}` : message;
  if (p.value !== undefined) text += ` (got ${JSON.stringify(p.value)})`;
  if (p.expected !== undefined) text += `; expected ${p.expected}`;
  return text;
}

/** Shorthand for option errors raised while parsing the command line or library arguments. */
export function usageError(message: string, place: ErrorPlace = {}): PeculiarError {
  return new PeculiarError("usage", message, place);
}
