/**
 * The registry of error codes. Every error that reaches a user (API body, CLI
 * message, client field marker) carries one of these codes, a JSON pointer into
 * the model where one applies, and a message. Codes are stable: clients may
 * branch on them. `tests/shared-types/errors.test.ts` checks that every code is
 * documented, with its status, in README.md's error table.
 */

export interface ErrorCodeInfo {
  /** HTTP status the API answers with. */
  readonly status: 400 | 401 | 403 | 404 | 405 | 409 | 413 | 414 | 421 | 422 | 429 | 499 | 500 | 503 | 504 | 507;
  /** One line for the docs and for logs. */
  readonly summary: string;
}

export const ERROR_CODES = {
  SN_JSON: { status: 400, summary: 'The request body is not valid JSON.' },
  SN_SCHEMA: { status: 400, summary: 'A field is missing, misspelt, of the wrong type, or not allowed here.' },
  SN_FORMAT: { status: 400, summary: 'The "format" field names a version this server does not read.' },
  SN_QUANTITY_SYNTAX: { status: 400, summary: 'A quantity is neither a number nor "<number> <unit>".' },
  SN_UNIT_MISSING: { status: 400, summary: 'A quantity string has a number but no unit.' },
  SN_UNIT_UNKNOWN: { status: 400, summary: 'A quantity names a unit that is not in the catalogue.' },
  SN_UNIT_KIND: { status: 400, summary: 'A quantity has a unit of the wrong kind (a length where a torque belongs).' },
  SN_NOT_FINITE: { status: 400, summary: 'A quantity is NaN, Infinity or overflows.' },
  SN_NOT_POSITIVE: { status: 400, summary: 'A length, diameter, modulus, radius, stiffness or speed is zero or negative.' },
  SN_OUT_OF_RANGE: { status: 400, summary: "A value is outside its physical range (Poisson's ratio, an allowable stress)." },
  SN_DUPLICATE_ID: { status: 400, summary: 'Two items of one list share an id.' },
  SN_UNRESOLVED: { status: 400, summary: 'A reference names a shaft, section or material that does not exist.' },
  SN_OFF_SHAFT: { status: 400, summary: 'A point ("at", "from", "to") lies outside [0, length] of its shaft.' },
  SN_SECTION_GEOMETRY: { status: 400, summary: 'A bore is not smaller than its outer diameter, layers do not grow outwards, a tube wall is too thick, or a taper joins sections of another pair.' },
  SN_MATERIAL: { status: 400, summary: 'A material gives neither G nor both E and nu, or both; or a segment lacks the material its section needs.' },
  SN_GEAR_SIZE: { status: 400, summary: 'A gear gives neither radius nor teeth, both, or teeth without the mesh module.' },
  SN_TORQUE_FORM: { status: 400, summary: 'A point torque gives neither "torque" nor "power" with "speed", or both.' },
  SN_RAISER_PLACE: { status: 400, summary: 'A shoulder stress raiser is not at a segment boundary where the diameter steps.' },
  SN_LOAD_CASE: { status: 400, summary: 'A load names no case while the model has load cases, names one without them, or a load case has no loads.' },
  SN_RANGE_ORDER: { status: 400, summary: 'A distributed torque ends before it starts.' },
  SN_MECHANISM: { status: 422, summary: 'Some shafts are free to spin: no fixed or spring support holds them.' },
  SN_LOOP_MISMATCH: { status: 422, summary: 'Rigid connections close a loop whose offsets or misfits do not add up: no assembly exists.' },
  SN_ILL_CONDITIONED: { status: 422, summary: 'The stiffness matrix is too badly conditioned to give trustworthy numbers.' },
  SN_TOO_LARGE: { status: 413, summary: 'The body or the model exceeds a configured limit (bytes, stations, shafts).' },
  SN_NOT_FOUND: { status: 404, summary: 'No model or revision with that id.' },
  SN_STALE_REVISION: { status: 409, summary: 'The model was saved by someone else since your base revision.' },
  SN_UNAUTHORISED: { status: 401, summary: 'This server needs the team token.' },
  SN_RATE_LIMITED: { status: 429, summary: 'Too many solve requests, or sign-in attempts, from one address; wait and retry.' },
  SN_BUSY: { status: 503, summary: 'All solver workers are busy; retry shortly.' },
  SN_TIMEOUT: { status: 504, summary: 'The solve took longer than the configured time limit.' },
  SN_DISK_FULL: { status: 507, summary: "Nothing was saved: the library's disk is full. The same save succeeds once space is freed." },
  SN_CROSS_SITE: { status: 403, summary: 'A state-changing request that a page of another site could have sent (no JSON content type, or a foreign Origin or Sec-Fetch-Site).' },
  SN_HOST: { status: 421, summary: 'The Host header names neither this server nor a configured name (--allowed-hosts).' },
  SN_METHOD: { status: 405, summary: 'The path exists but not with this method; the Allow header lists the methods it has.' },
  SN_BAD_REQUEST: { status: 400, summary: 'The request itself is malformed: a path escape that is not UTF-8, or a broken request line or header.' },
  SN_PATH_TOO_LONG: { status: 414, summary: 'A part of the path is longer than the server reads (1000 characters).' },
  // Review and personal keys (issue 13).
  SN_ROLE: { status: 403, summary: 'The request needs a personal key with a role this one (or the team token) does not have; the message names the role.' },
  SN_FOUR_EYES: { status: 403, summary: 'Nobody checks, approves or returns a revision they authored.' },
  SN_REVIEW_STALE: { status: 409, summary: 'A review state was sent for a revision that is no longer the latest of its model.' },
  SN_REVIEW_STATE: { status: 409, summary: 'That review state cannot follow the revision\'s current one (approved and returned are final).' },
  // Dynamics (natural frequencies, issue 12).
  SN_DYN_NO_INERTIA: { status: 422, summary: 'A model with dynamics has no inertia, or a group of shafts free to spin has none: no natural frequency exists.' },
  // Forced response (dynamics): damping needed, and a dynamic stiffness that cannot be factorised.
  SN_DYN_NO_DAMPING: { status: 400, summary: 'A forced response needs a damping ratio above 0 (the response at a resonance is unbounded without it).' },
  SN_DYN_FORCED_SINGULAR: { status: 422, summary: 'The dynamic stiffness of the forced response is singular: a part with neither stiffness nor inertia.' },
  SN_INTERNAL: { status: 500, summary: 'A fault in the server itself (not in the request); the server log has the details.' },
  // Progress and cancel (issue 14): the caller stopped the solve (closed the connection, Ctrl+C).
  SN_CANCELLED: { status: 499, summary: 'The solve was cancelled by its caller before it finished; nothing is wrong with the model.' },
  // The library in PostgreSQL (issue 15): its database server lost while the server runs.
  SN_STORE_UNAVAILABLE: { status: 503, summary: "The library's database server cannot be reached; nothing of this request was saved. Retry shortly (Retry-After)." },
} as const satisfies Record<string, ErrorCodeInfo>;

export type ErrorCode = keyof typeof ERROR_CODES;

/** One thing wrong with a model, aimed at a field. */
export interface ModelIssue {
  readonly code: ErrorCode;
  /** RFC 6901 JSON pointer into the submitted model ("" for the whole model). */
  readonly pointer: string;
  readonly message: string;
  /** For SN_MECHANISM: the shafts free to spin; for loop errors: the shafts in the loop. */
  readonly shafts?: readonly string[];
  /** For loop errors: the ids of the meshes and couplings of the loop. */
  readonly connections?: readonly string[];
}

/** The body of every 4xx/5xx answer from the API. */
export interface ErrorBody {
  readonly error: {
    readonly code: ErrorCode;
    readonly message: string;
    readonly issues: readonly ModelIssue[];
  };
}

/**
 * The error the engine throws for a model it cannot solve. Carries every issue
 * found, not just the first, so a user fixes them in one pass.
 */
export class ModelError extends Error {
  readonly code: ErrorCode;
  readonly issues: readonly ModelIssue[];

  constructor(issues: readonly ModelIssue[]) {
    const first = issues[0];
    super(first ? `${first.pointer || '(model)'}: ${first.message}` : 'invalid model');
    this.name = 'ModelError';
    this.code = first ? first.code : 'SN_SCHEMA';
    this.issues = issues;
  }

  /** The HTTP status of the first issue. */
  get status(): number {
    return ERROR_CODES[this.code].status;
  }
}

/** Escapes one key for a JSON pointer (RFC 6901). */
export function pointerToken(key: string | number): string {
  if (typeof key === 'number') return String(key);
  // Most keys need no escaping; this runs for every field of a model.
  if (!key.includes('~') && !key.includes('/')) return key;
  return key.replace(/~/g, '~0').replace(/\//g, '~1');
}

/** Joins keys into a JSON pointer. */
export function pointer(...keys: Array<string | number>): string {
  let out = '';
  for (const k of keys) out += '/' + pointerToken(k);
  return out;
}
