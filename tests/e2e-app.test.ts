// End to end in Debian Chromium against serve mode started here on a random port: open the demo,
// type an error and see it flagged, switch encodings, run the model and see the waveform, open the safety notes.
import { copyFileSync, existsSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServe } from '../main/commands/serve';
import type { RunningServer } from '../main/services/server';

const CHROMIUM = '/usr/bin/chromium';
const ARTIFACTS = path.join(__dirname, '..', 'test-artifacts');
const shot = (page: Page, name: string) => page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`) });

let server: RunningServer;
let browser: Browser;
let page: Page;
const consoleErrors: string[] = [];

beforeAll(async () => {
  // This test needs Debian's Chromium; without it the test fails, it does not skip.
  expect(existsSync(CHROMIUM), `${CHROMIUM} is missing: apt-get install chromium`).toBe(true);
  mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServe(0, { err: () => {} });
  browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run', '--disable-sync'],
  });
  page = await browser.newPage({ viewport: { width: 1400, height: 860 } });
  page.on('console', (m) => m.type() === 'error' && consoleErrors.push(m.text()));
  page.on('pageerror', (e) => consoleErrors.push(e.message));
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

async function waitForText(page: Page, selector: string, re: RegExp, timeout = 20_000): Promise<string> {
  const loc = page.locator(selector);
  await expect.poll(async () => ((await loc.count()) ? await loc.first().innerText() : ''), { timeout }).toMatch(re);
  return loc.first().innerText();
}

describe('Twinstep in Chromium', () => {
  it('opens with the demo design checked', async () => {
    const res = await page.goto(server.url);
    expect(res?.status()).toBe(200);
    await waitForText(page, '[data-testid=check-status]', /checked, no errors/);
    expect(await page.inputValue('[data-testid=design-editor]')).toContain('machine tank_dosing');
    await expect.poll(() => page.locator('.tok-kw').count()).toBeGreaterThan(20);
    await shot(page, 'design');
    copyFileSync(path.join(ARTIFACTS, 'design.png'), path.join(__dirname, '..', 'docs', 'screenshot-design.png'));
  });

  it('flags an error typed into the design, inline and in the list, and clears it when fixed', async () => {
    const editor = page.locator('[data-testid=design-editor]');
    const original = await editor.inputValue();
    await editor.focus();
    await page.keyboard.press('Control+End');
    await page.keyboard.type('\nstate Spill\n  go Drain\n');
    await waitForText(page, '[data-testid=diagnostics]', /no state named 'Drain'/);
    await expect.poll(() => page.locator('.squiggle-error', { hasText: 'Drain' }).count()).toBe(1);
    const errorLine = original.split('\n').length + 2;
    expect(await page.locator('.gutter-line.error').first().innerText()).toBe(String(errorLine));
    await waitForText(page, '[data-testid=check-status]', /1 error/);
    await shot(page, 'design-error');
    await editor.fill(original);
    await waitForText(page, '[data-testid=check-status]', /checked, no errors/);
    expect(await page.locator('.squiggle-error').count()).toBe(0);
  });

  it('draws the state diagram and changes the equations with the encoding', async () => {
    await page.click('[data-testid=nav-machine]');
    const diagram = page.locator('[data-testid=state-diagram]');
    await diagram.waitFor({ timeout: 20_000 });
    for (const name of ['Idle', 'Prime', 'Pump', 'Finish']) expect(await diagram.locator('text', { hasText: new RegExp(`^${name}$`) }).count()).toBe(1);
    const binary = await waitForText(page, '[data-testid=synth-equations]', /q1' =/);
    await waitForText(page, '[data-testid=encoding-compare]', /onehot full decode/);
    expect(await page.locator('[data-testid=encoding-custom]').isDisabled()).toBe(true);
    await page.click('[data-testid=encoding-onehot]');
    await expect.poll(() => page.locator('[data-testid=synth-equations]').innerText(), { timeout: 20_000 }).not.toBe(binary);
    await waitForText(page, '[data-testid=synth-encoding]', /Idle\s+1000\s+Prime\s+0100/);
    await page.click('[data-testid=encoding-gray]');
    const gray = await waitForText(page, '.sec-encoding h3', /gray, 2 flip-flops/);
    expect(gray).toContain('reset code 00');
    await shot(page, 'machine');
  });

  it('runs the model on seeded random stimulus and draws the waveform', async () => {
    await page.click('[data-testid=nav-simulate]');
    await page.fill('[data-testid=sim-cycles]', '5000');
    await page.fill('[data-testid=sim-seed]', '3');
    await page.click('[data-testid=sim-run]');
    const canvas = page.locator('[data-testid=waveform]');
    await canvas.waitFor({ timeout: 30_000 });
    await waitForText(page, '[data-testid=wave-range]', /of 5000$/);
    // The plot has drawn traces: many pixels in the trace colours, not just the background.
    const coloured = await canvas.evaluate((c: HTMLCanvasElement) => {
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i] > 150 || d[i + 1] > 150) n++;
      return n;
    });
    expect(coloured).toBeGreaterThan(2000);
    const before = await page.locator('[data-testid=wave-range]').innerText();
    await page.click('[data-testid=zoom-in]');
    await expect.poll(() => page.locator('[data-testid=wave-range]').innerText()).not.toBe(before);
    const box = (await canvas.boundingBox())!;
    await page.mouse.move(box.x + 400, box.y + 100);
    await waitForText(page, '[data-testid=wave-readout]', /^cycle \d+: go_btn=[01] .* state=(Idle|Prime|Pump|Finish) /);
    await page.selectOption('[data-testid=sim-radix]', 'hex');
    await waitForText(page, '[data-testid=wave-readout]', /dose=0x[0-9a-f]{2}/);
    await shot(page, 'simulate');
  });

  it('names the row and column of a bad CSV stimulus', async () => {
    await page.click('[data-testid=source-csv]');
    await page.fill('[data-testid=sim-csv]', 'go_btn,pulse,dose,abort\n1,0,5,0\n0,1,lots,0\n');
    await page.click('[data-testid=sim-run]');
    await waitForText(page, '[data-testid=sim-diagnostics]', /stimulus line 3:5 'lots' is not a number/);
  });

  it('shows the bench safety notes from the header and before the bench', async () => {
    await page.click('[data-testid=safety-button]');
    const panel = page.locator('[data-testid=safety-panel]');
    await panel.waitFor();
    const text = await panel.innerText();
    for (const needle of ['current limit', '3.3 V', '5 V', 'wrist strap', 'ANSI/ESD S20.20', 'powered', "lab's own rules", "board maker's documentation"]) expect(text).toContain(needle);
    await shot(page, 'safety');
    await page.keyboard.press('Escape');
    await expect.poll(() => panel.count()).toBe(0);
    await page.click('[data-testid=nav-bench]');
    await panel.waitFor();
    await page.getByRole('button', { name: 'I have read these notes' }).click();
    await waitForText(page, '[data-testid=bench-not-yet]', /coming with the probe/i);
    await page.click('[data-testid=nav-design]');
    await page.click('[data-testid=nav-bench]');
    expect(await panel.count()).toBe(0);
  });

  it('ran without console errors (a CSP violation would show here)', () => {
    expect(consoleErrors).toEqual([]);
  });
});
