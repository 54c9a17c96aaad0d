/** Invented models that more than one test file builds on; each test's header says what it reads from them. */

/**
 * One uniform steel shaft "line" (G = 79.3 GPa, allowable shear 55 MPa, solid d = 50 mm) of two segments
 * of 500 mm, fixed at both ends ("A" at z = 0, "B" at 1 m), with torques "T1" of 360 N·m at 300 mm and
 * "T2" of −600 N·m at 700 mm. Invented; a new object on every call, so a test may change its copy.
 */
export function fixedBarTwoTorques(name: string) {
  return {
    format: 'shaftnet/1',
    name,
    materials: [{ id: 'steel', G: '79.3 GPa', allowableShear: '55 MPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [{ id: 'line', segments: [{ length: '500 mm', section: 'd50', material: 'steel' }, { length: '500 mm', section: 'd50', material: 'steel' }] }],
    supports: [
      { id: 'A', shaft: 'line', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'line', at: '1 m', kind: 'fixed' },
    ],
    torques: [
      { id: 'T1', shaft: 'line', at: '300 mm', torque: '360 N*m' },
      { id: 'T2', shaft: 'line', at: '700 mm', torque: '-600 N*m' },
    ],
  };
}
