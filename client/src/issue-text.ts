/**
 * What the screen says about the API's issues: one reader's sentence per
 * problem, with readable paths ("shaft "input", segment 2, length") instead of
 * JSON pointers, and the shafts free to spin said once.
 */
import type { ModelIssue } from '../../shared-types/errors.js';
import { type EditModel, describePointer, issuesByPointer } from './model-edits.js';

/** The shafts an issue list names as free to spin. */
export function freeShafts(issues: readonly ModelIssue[]): string[] {
  return issues.filter((i) => i.code === 'SN_MECHANISM').flatMap((i) => i.shafts ?? []);
}

/** One sentence for shafts free to spin: "Shafts output, tail are free to spin: …". */
export function mechanismText(shafts: readonly string[]): string {
  const many = shafts.length > 1;
  return `${many ? 'Shafts' : 'Shaft'} ${shafts.join(', ')} ${many ? 'are' : 'is'} free to spin: add a fixed or spring support on ${
    many ? 'them' : 'it'
  }, or connect ${many ? 'them' : 'it'} to a supported shaft.`;
}

/** One issue as a reader's line: "shaft "input", segment 1, length: must be …". */
export function issueLine(model: EditModel | null, issue: ModelIssue): string {
  if (issue.code === 'SN_MECHANISM') return mechanismText(issue.shafts ?? []);
  return `${describePointer(model, issue.pointer)}: ${issue.message}`;
}

/**
 * The banner's reason for "not solved": the first problem in readable form and
 * how many more the list holds; `fallback` (the API's message) when there are no issues.
 */
export function bannerReason(model: EditModel | null, issues: readonly ModelIssue[], fallback: string): string {
  if (issues.length === 0) return fallback;
  const free = freeShafts(issues);
  // The list above says what to do about shafts free to spin; the banner only names them.
  const first =
    issues[0].code === 'SN_MECHANISM'
      ? `${free.length > 1 ? 'shafts' : 'shaft'} ${free.join(', ')} ${free.length > 1 ? 'are' : 'is'} free to spin (see above)`
      : issueLine(model, issues[0]).replace(/\.$/, '');
  const more = issues.filter((i) => i.code !== 'SN_MECHANISM').length - (issues[0].code === 'SN_MECHANISM' ? 0 : 1);
  return more > 0 ? `${first} (and ${more} more, listed above)` : first;
}

/** What the editor and the schematic mark for a list of issues. */
export interface IssueMarks {
  /** Messages by field (or row) pointer, several joined. */
  readonly messages: Readonly<Record<string, string>>;
  /** Row pointers of the shafts free to spin ("/shafts/2"). */
  readonly rows: readonly string[];
  /** Ids of the shafts free to spin. */
  readonly shafts: readonly string[];
}

/**
 * The marks of an issue list: each issue's message at its pointer, a note on
 * the row of every shaft free to spin, and a loop's message on the rows of the
 * gear meshes and couplings it names.
 */
export function issueMarks(model: EditModel | null, issues: readonly ModelIssue[]): IssueMarks {
  const messages = issuesByPointer(issues.filter((i) => i.code !== 'SN_MECHANISM'));
  const shafts = freeShafts(issues);
  const rows = (model?.shafts ?? []).flatMap((s, i) => (shafts.includes(s.id) ? [`/shafts/${i}`] : []));
  for (const p of rows) messages[p] = 'Free to spin: add a fixed or spring support on this shaft or on one it drives.';
  for (const i of issues) {
    for (const c of i.connections ?? []) {
      const g = (model?.gearMeshes ?? []).findIndex((x) => x.id === c);
      const k = (model?.couplings ?? []).findIndex((x) => x.id === c);
      const p = g >= 0 ? `/gearMeshes/${g}` : k >= 0 ? `/couplings/${k}` : '';
      if (p && !messages[p]) messages[p] = i.message;
    }
  }
  return { messages, rows, shafts };
}
