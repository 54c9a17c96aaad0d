/**
 * The compare view's text (client/src/sheet-compare.ts): inputs as typed, old → new, by item and
 * field; results in the user's unit system with absolute and relative deltas. The comparison fed in
 * is the shared code's own answer for two invented models, so the view and the API agree.
 * Unit factors: 1 MPa = 1e6 Pa; 1 lbf·in = 0.45359237 × 9.80665 × 0.0254 N·m (exact definitions).
 */
import { describe, expect, it } from 'vitest';
import { compareInputs, compareResults } from '../../shared-types/compare.js';
import { inputRows, resultRows, typedText } from '../../client/src/sheet-compare.js';

describe('compare view rows', () => {
  it('inputs: one row per change, the item named by its list and id, values as typed', () => {
    const a = { name: 'A', sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }], torques: [{ id: 'T', shaft: 's', at: 0.3, torque: '1 kN*m' }] };
    const b = { name: 'B', sections: [{ id: 'd40', shape: 'solid', d: '45 mm' }], torques: [] };
    const rows = inputRows(compareInputs(a, b));
    expect(rows).toEqual([
      { change: 'changed', item: 'model', field: 'name', from: 'A', to: 'B' },
      { change: 'changed', item: 'sections d40', field: 'd', from: '40 mm', to: '45 mm' },
      { change: 'removed', item: 'torques T', field: '(whole item)', from: '{"id":"T","shaft":"s","at":0.3,"torque":"1 kN*m"}', to: '—' },
    ]);
    expect(typedText(0.3)).toBe('0.3');
    expect(typedText(null)).toBe('—');
  });

  it('results: display units of the system, signed deltas, relative in per cent', () => {
    const changes = compareResults(
      { reactions: [{ support: 'A', torque: -700 }], shafts: [{ id: 's', segments: [{ index: 0, layers: [{ material: 'steel', maxShear: 55.7e6, utilisation: 0.5 }] }] }] },
      { reactions: [{ support: 'A', torque: -600 }], shafts: [{ id: 's', segments: [{ index: 0, layers: [{ material: 'steel', maxShear: 47.75e6, utilisation: 0.6 }] }] }] },
    );
    const si = resultRows(changes, 'si');
    expect(si[0]).toEqual({ what: 'Reaction', item: 'A', unit: 'N·m', from: '-700', to: '-600', delta: '+100', relative: '+14.3 %' });
    // 55.7 MPa → 47.75 MPa: Δ = −7.95 MPa, −14.27… % (to 3 figures −14.3 %).
    expect(si[1]).toEqual({ what: 'Peak shear stress', item: 's[0] steel', unit: 'MPa', from: '55.7', to: '47.75', delta: '-7.95', relative: '-14.3 %' });
    expect(si[2]).toMatchObject({ what: 'Utilisation', unit: '', from: '0.5', to: '0.6', delta: '+0.1', relative: '+20 %' });
    // US customary: torque in lbf·in, 100 N·m / (0.45359237 × 9.80665 × 0.0254) = 885.07 lbf·in (to 5 figures).
    const us = resultRows(changes, 'us');
    expect(us[0].unit).toBe('lbf·in');
    expect(us[0].delta).toBe('+885.07');
  });

  it('a side that is missing shows a dash and no delta', () => {
    const rows = resultRows(compareResults({ reactions: [{ support: 'A', torque: 1 }] }, null), 'si');
    expect(rows).toEqual([{ what: 'Reaction', item: 'A', unit: 'N·m', from: '1', to: '—', delta: '—', relative: '—' }]);
  });
});
