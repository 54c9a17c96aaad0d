/**
 * Torsional dynamics in the client. Without a browser: rates and their units,
 * the dynamics object's edits (client/src/dynamics-edits.ts) through the
 * editor's history, and the readings the dynamics results draw
 * (client/src/dynamics-results.ts). The solutions here are invented to exercise
 * the readings, never a solver's answer; each expected number is a definition
 * (1 Hz = 60 rpm = 2π rad/s), the crossing relation order × speed = frequency
 * of the model format ("Dynamics"), or arithmetic written beside it.
 *
 * In real Chromium (playwright-core, /usr/bin/chromium) against the real built
 * server on a free loopback port, the dynamics panel's editing alone: add, units,
 * orders, an excitation, undo, remove. It holds whether or not the server solves
 * dynamics yet (what the solve answers is the e2e test of issue 12). Without
 * Chromium that part is skipped with a clear message (tests/client/e2e.test.ts
 * registers the failure that SHAFTNET_REQUIRE_BROWSER=1 asks for).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { browserSuite, hasBrowser, warnIfNoBrowser } from '../helpers/browser-suite.js';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import { History, applyEdit } from '../../client/src/model-edits.js';
import {
  dynamicsOf,
  marginText,
  modesBy,
  newDynamics,
  ordersText,
  parseMargin,
  parseOrders,
  switchModesBy,
  withExcitation,
  withoutExcitation,
} from '../../client/src/dynamics-edits.js';
import {
  type ModeResult,
  computeCrossings,
  convertRate,
  crossingRows,
  energyLeaders,
  frequencyRows,
  fromRadPerS,
  hzToRpm,
  interferenceDiagram,
  localPeaks,
  modeShape,
  parseRateInput,
  rangeWithMargin,
  rateText,
  readRate,
  sharesText,
  toRadPerS,
  worstSegments,
} from '../../client/src/dynamics-results.js';
import { linearScale, niceTicks } from '../../client/src/chart-scale.js';

const REL = 1e-12; // relative: arithmetic on a few doubles, round-off only

function close(actual: number, expected: number, rel = REL): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(expected)));
}

const model = (): Model =>
  ({
    format: 'shaftnet/1',
    name: 'dynamics edits (invented)',
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [
      { id: 'input', segments: [{ length: '1 m', section: 'd50', material: 'steel' }] },
      { id: 'output', segments: [{ length: '1 m', section: 'd50', material: 'steel' }] },
    ],
    supports: [{ id: 'A', shaft: 'input', at: 0, kind: 'fixed' }],
  }) as unknown as Model;

const mode = (frequency: number, strain: ModeResult['energy']['strain'] = [], kinetic: ModeResult['energy']['kinetic'] = []): ModeResult => ({
  frequency,
  shafts: [],
  energy: { strain, kinetic },
});

describe('rates: one cycle is 2π rad; a minute is 60 s (definitions)', () => {
  it('1 Hz = 60 rpm = 2π rad/s, 1 kHz = 1000 Hz', () => {
    close(toRadPerS(1, 'Hz'), 2 * Math.PI);
    close(toRadPerS(60, 'rpm'), 2 * Math.PI);
    close(toRadPerS(1, 'kHz'), toRadPerS(1000, 'Hz'));
    close(fromRadPerS(2 * Math.PI, 'rpm'), 60);
    close(fromRadPerS(2 * Math.PI, 'Hz'), 1);
    close(hzToRpm(1), 60);
  });

  it('reads stored rates in every unit, a plain number as rad/s, and refuses what is not a rate', () => {
    close(readRate('600 rpm')?.radPerS ?? NaN, (600 * 2 * Math.PI) / 60);
    expect(readRate('600 rpm')?.unit).toBe('rpm');
    close(readRate('12.5 Hz')?.radPerS ?? NaN, 25 * Math.PI);
    close(readRate('2 kHz')?.radPerS ?? NaN, 4000 * Math.PI);
    close(readRate('100 rad/s')?.radPerS ?? NaN, 100);
    close(readRate('100 r/min')?.radPerS ?? NaN, (100 * 2 * Math.PI) / 60);
    close(readRate(62.5)?.radPerS ?? NaN, 62.5);
    expect(readRate('600 mm')).toBeNull();
    expect(readRate('fast')).toBeNull();
    expect(readRate(undefined)).toBeNull();
  });

  it('an input in the chosen unit: a plain number takes the unit, a unit typed is kept, rubbish is a problem', () => {
    expect(parseRateInput('1800', 'rpm')).toEqual({ value: '1800 rpm' });
    expect(parseRateInput(' 30 Hz ', 'rpm')).toEqual({ value: '30 Hz' });
    expect(parseRateInput('', 'rpm')).toEqual({ value: undefined });
    const bad = parseRateInput('quick', 'rpm');
    expect(bad.value).toBe('quick');
    expect(bad.problem).toMatch(/not a rate/);
  });

  it('shows and rewrites a stored rate in another unit: 30 Hz is 1800 rpm', () => {
    expect(rateText('30 Hz', 'rpm')).toBe('1800');
    expect(rateText('1800 rpm', 'Hz')).toBe('30');
    expect(rateText('odd', 'Hz')).toBe('odd');
    expect(convertRate('30 Hz', 'rpm')).toBe('1800 rpm');
    expect(convertRate('1800 rpm', 'rad/s')).toBe(`${Number((60 * Math.PI).toPrecision(10))} rad/s`);
  });
});

describe('the dynamics object in the editor', () => {
  it('is added and removed by edits of /dynamics, and undo brings the model back', () => {
    const m0 = model();
    const h = new History(m0);
    const withDyn = h.commit(applyEdit(m0, '/dynamics', newDynamics(m0)));
    expect(dynamicsOf(withDyn)).toEqual({
      modes: 6,
      speed: { shaft: 'input', min: '600 rpm', max: '1800 rpm' },
      orders: [1, 2],
      margin: 0.1,
      damping: 0.02,
    });
    const edited = h.commit(applyEdit(withDyn, '/dynamics/speed/max', '2400 rpm'));
    expect(dynamicsOf(edited)?.speed?.max).toBe('2400 rpm');
    const removed = h.commit(applyEdit(edited, '/dynamics', undefined));
    expect(dynamicsOf(removed)).toBeUndefined();
    expect('dynamics' in removed).toBe(false);
    expect(dynamicsOf(h.undo())?.speed?.max).toBe('2400 rpm');
    expect(dynamicsOf(h.undo())?.speed?.max).toBe('1800 rpm');
    expect(dynamicsOf(h.undo())).toBeUndefined();
  });

  it('adds excitations on the reference shaft with fresh ids and drops the list when the last goes', () => {
    const m0 = model();
    const dyn = { ...newDynamics(m0), speed: { shaft: 'output', min: '600 rpm', max: '1800 rpm' } };
    const one = withExcitation(m0, dyn);
    expect(one).toEqual([{ id: 'E1', shaft: 'output', at: 0, amplitude: '10 N*m', order: 1 }]);
    const two = withExcitation(m0, { ...dyn, excitations: one }, 0);
    expect(two.map((e) => e.id)).toEqual(['E2', 'E1']);
    expect(withoutExcitation({ ...dyn, excitations: two }, 0)?.map((e) => e.id)).toEqual(['E1']);
    expect(withoutExcitation({ ...dyn, excitations: one }, 0)).toBeUndefined();
  });

  it('reads orders typed as a list, positive only (half orders allowed)', () => {
    expect(parseOrders('1, 2 ,4')).toEqual({ value: [1, 2, 4] });
    expect(parseOrders('0.5 1;1.5')).toEqual({ value: [0.5, 1, 1.5] });
    expect(parseOrders('  ')).toEqual({ value: undefined });
    expect(parseOrders('1, -2').problem).toMatch(/"-2" is not an order/);
    expect(parseOrders('1, 0').problem).toMatch(/"0"/);
    expect(parseOrders('1, x').problem).toMatch(/"x"/);
    expect(ordersText([1, 2, 4])).toBe('1, 2, 4');
  });

  it('shows the margin in per cent and stores the fraction', () => {
    expect(marginText(0.1)).toBe('10');
    expect(marginText(0.075)).toBe('7.5');
    expect(parseMargin('10 %')).toEqual({ value: 0.1 });
    expect(parseMargin('7.5')).toEqual({ value: 0.075 });
    expect(parseMargin('')).toEqual({ value: undefined });
    expect(parseMargin('-5').problem).toMatch(/percentage/);
  });

  it('gives modes as a count or as every mode up to a frequency, one field at a time', () => {
    const d = newDynamics(model());
    expect(modesBy(d)).toBe('count');
    const up = switchModesBy(d, 'upTo');
    expect(modesBy(up)).toBe('upTo');
    expect(up.modes).toBeUndefined();
    expect(up.maxFrequency).toBe('500 Hz');
    expect(switchModesBy({ ...up, maxFrequency: '2 kHz' }, 'count')).toMatchObject({ modes: 6 });
    expect(switchModesBy({ ...up, maxFrequency: '2 kHz' }, 'count').maxFrequency).toBeUndefined();
  });
});

describe('frequencies and energy shares', () => {
  it('lists each mode in Hz and rpm (× 60) with the leading shares, largest first', () => {
    const rows = frequencyRows([
      mode(0, null, [{ item: 'rotor', share: 0.6 }, { item: 'input[0]', share: 0.4 }]),
      mode(41.3, [{ item: 'input[0]', share: 0.2 }, { item: 'k1', share: 0.71 }, { item: 'G1', share: 0.05 }, { item: 'input[1]', share: 0.04 }], [{ item: 'rotor', share: 0.88 }, { item: 'fan', share: 0.12 }]),
    ]);
    expect(rows[0]).toMatchObject({ mode: 1, hz: 0, rpm: 0, rigid: true, stiffen: [] });
    expect(rows[1].mode).toBe(2);
    close(rows[1].rpm, 41.3 * 60);
    expect(rows[1].rigid).toBe(false);
    expect(rows[1].stiffen.map((s) => s.item)).toEqual(['k1', 'input[0]', 'G1']);
    expect(rows[1].inertia.map((s) => s.item)).toEqual(['rotor', 'fan']);
    expect(sharesText(rows[1].inertia)).toBe('rotor 88 %, fan 12 %');
  });

  it('has no strain leaders for a rigid-body mode (strain shares null)', () => {
    expect(energyLeaders(null)).toEqual([]);
    expect(energyLeaders([{ item: 'a', share: 0.1 }, { item: 'b', share: 0.9 }], 1)).toEqual([{ item: 'b', share: 0.9 }]);
  });
});

describe('crossings: order × speed = frequency (model format, "Dynamics")', () => {
  const rpm = (n: number) => toRadPerS(n, 'rpm');
  const range = { min: rpm(600), max: rpm(1800), margin: 0.1 };

  it('finds a crossing at f / order and flags it inside min·(1 − margin) … max·(1 + margin)', () => {
    // 50 Hz with order 2: 25 rev/s = 1500 rpm, inside 540 … 1980 rpm; order 1: 3000 rpm, outside.
    const c = computeCrossings([0, 50], [1, 2], range);
    expect(c.map((x) => [x.mode, x.order, x.inRange])).toEqual([
      [2, 1, false],
      [2, 2, true],
    ]);
    close(c[1].speed, (2 * Math.PI * 50) / 2);
    close(fromRadPerS(c[1].speed, 'rpm'), 1500);
  });

  it('holds the widened edges: 1980 rpm is max·1.1, 540 rpm is min·0.9', () => {
    const band = rangeWithMargin(range.min, range.max, range.margin);
    close(fromRadPerS(band.hi, 'rpm'), 1980);
    close(fromRadPerS(band.lo, 'rpm'), 540);
    // order 1: a frequency of 33 Hz crosses at 1980 rpm; 32.99 Hz just inside, 33.01 Hz just outside.
    expect(computeCrossings([32.99, 33.01], [1], range).map((x) => x.inRange)).toEqual([true, false]);
    // 9 Hz crosses at 540 rpm: 9.01 Hz just inside, 8.99 Hz just outside.
    expect(computeCrossings([8.99, 9.01], [1], range).map((x) => x.inRange)).toEqual([false, true]);
  });

  it('without a running range no crossing fails', () => {
    expect(computeCrossings([50], [2], null)).toEqual([{ mode: 1, order: 2, speed: 50 * Math.PI, inRange: false }]);
  });

  it('lists crossings by speed with the frequency of their mode and the speed in rpm', () => {
    const rows = crossingRows(
      [
        { mode: 1, order: 1, speed: 40 * Math.PI, inRange: false },
        { mode: 1, order: 2, speed: 20 * Math.PI, inRange: true },
      ],
      [mode(20)],
    );
    expect(rows.map((r) => r.order)).toEqual([2, 1]);
    close(rows[0].rpm, 600); // 20π rad/s = 10 rev/s = 600 rpm
    expect(rows[0].hz).toBe(20);
  });
});

describe('the speed–frequency interference diagram', () => {
  it('spans 1.25 × the widened range in rpm and 1.1 × the highest order line at its edge', () => {
    const rpm = (n: number) => toRadPerS(n, 'rpm');
    const modes = [mode(0), mode(50), mode(400)];
    const crossings = computeCrossings(modes.map((m) => m.frequency), [1, 2], { min: rpm(600), max: rpm(1800), margin: 0.1 });
    const d = interferenceDiagram({ min: rpm(600), max: rpm(1800) }, 0.1, [1, 2], modes, crossings);
    close(d.xMax, 1.25 * 1980); // 2475 rpm
    close(d.yMax, 1.1 * ((2 * 2475) / 60)); // order 2 at 2475 rpm: 82.5 Hz
    close(d.range.lo, 600);
    close(d.range.hi, 1800);
    close(d.band.lo, 540);
    close(d.band.hi, 1980);
    expect(d.orders.map((o) => o.order)).toEqual([1, 2]);
    close(d.orders[0].y1, 2475 / 60);
    close(d.orders[1].y1, 82.5);
    expect(d.frequencies).toEqual([{ mode: 2, hz: 50 }]); // 0 Hz is not drawn; 400 Hz is above
    expect(d.above).toBe(1);
    // mode 2 with order 2 at 1500 rpm (in range); with order 1 at 3000 rpm (off the diagram)
    expect(d.crossings.map((c) => [c.mode, c.order, c.inRange])).toEqual([[2, 2, true]]);
    close(d.crossings[0].x, 1500);
    expect(d.crossings[0].y).toBe(50);
  });

  it('rises to the lowest frequency when every order line stays below it', () => {
    const rpm = (n: number) => toRadPerS(n, 'rpm');
    const d = interferenceDiagram({ min: rpm(60), max: rpm(120) }, 0, [1], [mode(1000)], []);
    close(d.xMax, 150);
    close(d.yMax, 1100);
    expect(d.frequencies).toEqual([{ mode: 1, hz: 1000 }]);
  });
});

describe('scales, ticks, mode shapes and peaks', () => {
  it('maps a domain linearly onto a range', () => {
    const s = linearScale(0, 2475, 58, 666);
    close(s(0), 58);
    close(s(2475), 666);
    close(s(1237.5), 362);
    expect(linearScale(5, 5, 1, 9)(5)).toBe(1);
  });

  it('puts round ticks over a range (step 500 over 0 … 2475 in 8 parts)', () => {
    expect(niceTicks(0, 2475, 8)).toEqual([0, 500, 1000, 1500, 2000]);
    expect(niceTicks(-1.1, 1.1, 5)).toEqual([-1, -0.5, 0, 0.5, 1]);
  });

  it('draws a mode along a shaft at its stations, or at the z the engine gives', () => {
    const solution = { shafts: [{ id: 'input', stations: [{ z: 0 }, { z: 0.5 }, { z: 1 }] }] } as unknown as Solution;
    const m: ModeResult = {
      frequency: 41.3,
      shafts: [
        { id: 'input', rotation: [0, 0.7, 1] },
        { id: 'output', rotation: [1, -1], z: [0, 0.2] },
        { id: 'ghost', rotation: [1] },
      ],
      energy: { strain: [], kinetic: [] },
    };
    expect(modeShape(m, solution)).toEqual([
      { shaft: 'input', z: [0, 0.5, 1], phi: [0, 0.7, 1] },
      { shaft: 'output', z: [0, 0.2], phi: [1, -1] },
    ]);
  });

  it('finds the local maxima of a sampled response, ends included', () => {
    expect(localPeaks([0, 1, 3, 2, 5, 4])).toEqual([2, 4]);
    expect(localPeaks([3, 2, 1])).toEqual([0]);
    expect(localPeaks([1, 2, 2, 1])).toEqual([1]);
  });

  it('orders the segments of a forced response by peak torque', () => {
    const seg = (item: string, peakTorque: number) => ({ item, torque: [], shear: [], peakTorque, peakSpeed: 1 });
    expect(worstSegments({ speeds: [], segments: [seg('a[0]', 5), seg('b[0]', 95), seg('a[1]', 20)] }).map((g) => g.item)).toEqual(['b[0]', 'a[1]', 'a[0]']);
  });
});

warnIfNoBrowser('the browser test of the dynamics panel');

describe.runIf(hasBrowser)('the dynamics panel in Chromium', () => {
  const suite = browserSuite('dynpanel');
  let page: Page;
  const panel = 'sn-editor sn-dynamics-panel';
  const field = (pointer: string) => page.locator(`${panel} [data-pointer="${pointer}"]`).first();

  async function type(pointer: string, text: string): Promise<void> {
    const input = field(pointer);
    await input.fill(text);
    await input.press('Tab');
  }

  beforeAll(async () => {
    // One supported shaft with its own inertia (the steel has a density), so its dynamics solve.
    const id = await suite.saveModel({ ...model(), materials: [{ id: 'steel', G: '79.3 GPa', density: '7850 kg/m^3' }], shafts: model().shafts.slice(0, 1) }, 'test', 'panel');
    // A model the server refuses answers 400 on purpose (the panel's fields are checked here, not the solve).
    page = await suite.openPage({ allowStatus: 400 });
    await suite.openModel(page, id);
  });

  it('adds dynamics, reads the range in another unit, takes orders and an excitation, undoes and removes', async () => {
    await page.locator(`${panel} button[data-dynamics-add]`).click();
    expect(await field('/dynamics/speed/shaft').inputValue()).toBe('input');
    expect(await field('/dynamics/speed/min').inputValue()).toBe('600');
    expect(await field('/dynamics/speed/max').inputValue()).toBe('1800');
    expect(await field('/dynamics/orders').inputValue()).toBe('1, 2');
    expect(await field('/dynamics/margin').inputValue()).toBe('10');
    // A new dynamics object is valid: no field is marked, no message is shown (the shaft id and the
    // orders are not rates to be read as such).
    expect(await page.locator(`${panel} [aria-invalid="true"]`).count()).toBe(0);
    expect(await page.locator(`${panel} .msg`).count()).toBe(0);

    // In Hz: 600 rpm = 10 Hz, 1800 rpm = 30 Hz (60 rpm = 1 Hz); a plain number is then read in Hz.
    await page.locator(`${panel} select[aria-label="Unit of the running speed"]`).selectOption('Hz');
    await expect.poll(() => field('/dynamics/speed/min').inputValue()).toBe('10');
    expect(await field('/dynamics/speed/max').inputValue()).toBe('30');
    await type('/dynamics/speed/max', '25');
    await page.locator(`${panel} select[aria-label="Unit of the running speed"]`).selectOption('rpm');
    await expect.poll(() => field('/dynamics/speed/max').inputValue()).toBe('1500'); // 25 Hz × 60

    // Orders as a list; one that is not positive is refused beside the field and not stored.
    await type('/dynamics/orders', '1, 2, 4.5');
    await type('/dynamics/orders', '1, -2');
    await expect.poll(() => page.locator(`${panel} .msg`).allInnerTexts()).toContain('"-2" is not an order: give positive numbers, e.g. "1, 2, 4"');
    expect(await field('/dynamics/orders').inputValue()).toBe('1, -2'); // kept as typed, to be corrected
    await type('/dynamics/orders', '1, 2, 4.5');
    await expect.poll(async () => (await page.locator(`${panel} .msg`).allInnerTexts()).some((t) => /is not an order/.test(t))).toBe(false);
    expect(await field('/dynamics/orders').inputValue()).toBe('1, 2, 4.5');

    // A speed that is not a rate is stored as typed (the server names it too) and said beside the field.
    await type('/dynamics/speed/min', 'slow');
    await expect.poll(() => page.locator(`${panel} .msg`).allInnerTexts()).toContain('"slow" is not a rate: write e.g. "600 rpm", "10 Hz" or "62.8 rad/s"');
    expect(await field('/dynamics/speed/min').inputValue()).toBe('slow');
    await type('/dynamics/speed/min', '600');

    // An excitation: the table's own "+ Add" makes E1 on the reference shaft.
    await page.locator(`${panel} sn-table[pointer="/dynamics/excitations"] button.add`).click();
    await expect.poll(() => page.locator(`${panel} sn-table input[data-pointer="/dynamics/excitations/0/id"]`).inputValue()).toBe('E1');
    expect(await page.locator(`${panel} sn-table select[data-pointer="/dynamics/excitations/0/shaft"]`).inputValue()).toBe('input');

    // Undo takes the excitation away, then the two edits of the lowest speed, then the orders back to 1, 2.
    const undo = page.locator('sn-top-bar button', { hasText: 'Undo' });
    await undo.click();
    await expect.poll(() => page.locator(`${panel} sn-table input[data-pointer="/dynamics/excitations/0/id"]`).count()).toBe(0);
    await undo.click();
    await expect.poll(() => field('/dynamics/speed/min').inputValue()).toBe('slow');
    await undo.click();
    await expect.poll(() => field('/dynamics/speed/min').inputValue()).toBe('600');
    await undo.click();
    await expect.poll(() => field('/dynamics/orders').inputValue()).toBe('1, 2');

    // Remove the whole object; undo brings it back as it was.
    await page.locator(`${panel} button[data-dynamics-remove]`).click();
    await expect.poll(() => page.locator(`${panel} button[data-dynamics-add]`).count()).toBe(1);
    await undo.click();
    await expect.poll(() => field('/dynamics/speed/max').inputValue()).toBe('1500');
    expect(suite.errors).toEqual([]);
  });
});

