import { LitElement, css, html, nothing } from 'lit';
import type { Doc } from './controllers/library-document.js';
import type { EditModel } from './model-edits.js';
import { type UnitSystem, UNIT_SYSTEM_LABELS, displayUnit, prettyUnit } from './units.js';
import type { Review } from './review-types.js';
import { reviewLine } from './review-rules.js';

/**
 * The head of the printed report (shown only in print): the model, where it
 * comes from, the date, the units, whether the results match, and a summary of
 * shafts, materials, sections and connections.
 */
export class SnReportHead extends LitElement {
  static override styles = css`
    :host { display: none; }
    @media print { :host { display: block; margin-bottom: 10px; } }
    h1 { font-size: 18px; margin: 0 0 2px; }
    table { border-collapse: collapse; font-size: 12px; margin: 6px 0; }
    td, th { border-bottom: 1px solid #ddd; padding: 2px 8px 2px 0; text-align: left; }
    .review { margin: 4px 0; font-size: 12px; }
    .review.approved { font-size: 14px; font-weight: 700; border: 2px solid #1f6f3f; color: #1f6f3f; padding: 3px 8px; display: inline-block; }
  `;

  static override properties = {
    model: { attribute: false },
    doc: { attribute: false },
    dirty: { type: Boolean },
    system: { type: String },
    fresh: { type: Boolean },
    review: { attribute: false },
  };

  declare model: EditModel | null;
  declare doc: Doc | null;
  declare dirty: boolean;
  declare system: UnitSystem;
  /** The results match the model. */
  declare fresh: boolean;
  /** The review of the saved revision shown, or null. */
  declare review: Review | null;

  constructor() {
    super();
    this.model = null;
    this.doc = null;
    this.dirty = false;
    this.system = 'si';
    this.fresh = false;
    this.review = null;
  }

  override render() {
    const m = this.model;
    const d = this.doc;
    if (!m || !d) return nothing;
    const len = prettyUnit(displayUnit('length', this.system));
    return html`<div class="report-head">
      <h1>Shaftnet report — ${m.name}</h1>
      <div>${d.id ? `Library model ${d.id}, revision ${d.viewing ?? d.revision}` : 'Model not saved in the library'}${this.dirty ? ' (with unsaved changes)' : ''}.
        Printed ${new Date().toLocaleString()}. Units: ${UNIT_SYSTEM_LABELS[this.system]}.
        Results ${this.fresh ? 'match this model' : 'are OUT OF DATE for this model'}.</div>
      ${this.renderReview(d)}
      ${m.notes ? html`<p>${m.notes}</p>` : nothing}
      <table>
        <thead><tr><th>Shaft</th><th>Name</th><th>Segments (length [${len}] × section)</th><th>Supports</th><th>Point torques</th></tr></thead>
        <tbody>
          ${m.shafts.map(
            (s) => html`<tr><td>${s.id}</td><td>${s.name ?? ''}</td>
              <td>${s.segments.map((g) => `${String(g.length)} × ${g.section}${g.material ? ` (${g.material})` : ''}`).join(', ')}</td>
              <td>${(m.supports ?? []).filter((x) => x.shaft === s.id).map((x) => `${x.id} ${x.kind} at ${String(x.at)}`).join(', ')}</td>
              <td>${(m.torques ?? []).filter((x) => x.shaft === s.id).map((x) => `${x.id} ${String(x.torque ?? `${String(x.power)} at ${String(x.speed)}`)}`).join(', ')}</td></tr>`,
          )}
        </tbody>
      </table>
      <div>Materials: ${m.materials.map((x) => `${x.id} (${x.G !== undefined ? `G ${String(x.G)}` : `E ${String(x.E)}, ν ${String(x.nu)}`}${x.allowableShear !== undefined ? `, τallow ${String(x.allowableShear)}` : ''})`).join('; ')}.
        Sections: ${m.sections.map((x) => `${x.id} ${x.shape}`).join(', ')}.
        Meshes: ${(m.gearMeshes ?? []).map((x) => x.id).join(', ') || 'none'}. Couplings: ${(m.couplings ?? []).map((x) => x.id).join(', ') || 'none'}.</div>
    </div>`;
  }

  /** The review of the saved revision: an approved one says so in large letters (edits on top of it are not approved). */
  private renderReview(d: Doc) {
    const r = this.review;
    if (!r || !d.id) return nothing;
    const rev = d.viewing ?? d.revision;
    const approved = r.state === 'approved';
    return html`<div class="review ${approved ? 'approved' : ''}" data-review-state=${r.state}>
      ${approved ? html`APPROVED revision ${rev}${this.dirty ? ' — the changes on this print are NOT approved' : ''}. ` : nothing}${reviewLine(r, rev)}</div>`;
  }
}

customElements.define('sn-report-head', SnReportHead);

declare global {
  interface HTMLElementTagNameMap {
    'sn-report-head': SnReportHead;
  }
}
