// End to end in Debian Chromium against serve mode started here on a random port: open the demo, type an error
// and see it flagged, switch encodings, generate HDL, run and cancel the model, read the safety notes before the
// first connect, connect the emulated board with a stuck register bit, step through its divergences, replay the capture.
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
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
const captureDir = mkdtempSync(path.join(os.tmpdir(), 'twinstep-e2e-captures-'));
let page: Page;
const consoleErrors: string[] = [];

beforeAll(async () => {
  // This test needs Debian's Chromium; without it the test fails, it does not skip.
  expect(existsSync(CHROMIUM), `${CHROMIUM} is missing: apt-get install chromium`).toBe(true);
  mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServe(0, { err: () => {} }, { captureDir });
  browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run', '--disable-sync'],
  });
  page = await browser.newPage({ viewport: { width: 1400, height: 860 }, acceptDownloads: true });
  page.on('console', (m) => m.type() === 'error' && consoleErrors.push(m.text()));
  page.on('pageerror', (e) => consoleErrors.push(e.message));
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  rmSync(captureDir, { recursive: true, force: true });
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

  it('generates the HDL with the probe: files with their headers, the baud divisor, and a ZIP of them all', async () => {
    await page.click('[data-testid=nav-hdl]');
    const code = page.locator('[data-testid=hdl-code]');
    await waitForText(page, '[data-testid=hdl-code] .code-text', /^\/\/ tank_dosing_ctrl\.v: controller/);
    await waitForText(page, '[data-testid=baud-plan]', /divisor 104\s+actual 115384\.6 baud\s+error 0\.16%/);
    await page.click('[data-testid="hdl-file-tank_dosing_board.v"]');
    await expect.poll(() => code.getAttribute('data-file')).toBe('tank_dosing_board.v');
    expect(await code.locator('.code-text').innerText()).toMatch(/^\/\/ tank_dosing_board\.v: /);
    await shot(page, 'hdl');
    // A baud the clock cannot make is named before anything is generated with it.
    await page.selectOption('[data-testid=hdl-baud]', '921600');
    await waitForText(page, '[data-testid=baud-plan]', /cannot reach 921600 baud/);
    await waitForText(page, '[data-testid=probe-error]', /921600/);
    await page.selectOption('[data-testid=hdl-baud]', '115200');
    await expect.poll(() => page.locator('[data-testid=probe-error]').count(), { timeout: 10_000 }).toBe(0);
    const fileCount = await page.locator('[data-testid=hdl-files] .file-tab').count();
    expect(fileCount).toBeGreaterThan(6);
    await waitForText(page, '[data-testid=hdl-export]', new RegExp(`\\(${fileCount} files, ZIP\\)`));
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=hdl-export]')]);
    expect(download.suggestedFilename()).toBe('tank_dosing_hdl.zip');
    const zip = readFileSync((await download.path())!);
    expect(zip.subarray(0, 4).toString('latin1')).toBe('PK\u0003\u0004');
    for (const name of ['tank_dosing_ctrl.v', 'tank_dosing_dp.v', 'tank_dosing_top.v', 'tank_dosing_board.v', 'ts_uart_tx.v']) expect(zip.includes(Buffer.from(name))).toBe(true);
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

  it('shows the progress of a long run and cancels it', async () => {
    await page.fill('[data-testid=sim-cycles]', '1000000');
    await page.click('[data-testid=sim-run]');
    // Cancel as soon as the job is known: the run cannot have finished by then.
    await page.locator('[data-testid=sim-cancel]').waitFor({ timeout: 20_000 });
    await page.click('[data-testid=sim-cancel]');
    const banner = await waitForText(page, '.sim-screen .banner.error', /cancelled after \d+ cycles/);
    expect(Number(/after (\d+) cycles/.exec(banner)![1])).toBeLessThan(1_000_000);
    expect(await page.locator('[data-testid=sim-run]').isEnabled()).toBe(true);
    await page.fill('[data-testid=sim-cycles]', '5000');
  });

  it('names the row and column of a bad CSV stimulus', async () => {
    await page.click('[data-testid=source-csv]');
    await page.fill('[data-testid=sim-csv]', 'go_btn,pulse,dose,abort\n1,0,5,0\n0,1,lots,0\n');
    await page.click('[data-testid=sim-run]');
    await waitForText(page, '[data-testid=sim-diagnostics]', /stimulus line 3:5 'lots' is not a number/);
  });

  it('shows the bench safety notes from the header, and before the first connect', async () => {
    await page.click('[data-testid=safety-button]');
    const panel = page.locator('[data-testid=safety-panel]');
    await panel.waitFor();
    const text = await panel.innerText();
    for (const needle of ['current limit', '3.3 V', '5 V', 'wrist strap', 'ANSI/ESD S20.20', 'powered', "lab's own rules", "board maker's documentation"]) expect(text).toContain(needle);
    await shot(page, 'safety');
    await page.keyboard.press('Escape');
    await expect.poll(() => panel.count()).toBe(0);
    // The first visit to the Bench opens the notes by themselves; closing them without acknowledging...
    await page.click('[data-testid=nav-bench]');
    await panel.waitFor();
    await page.getByRole('button', { name: 'Close' }).click();
    await expect.poll(() => panel.count()).toBe(0);
    await page.locator('[data-testid=safety-gate]').waitFor();
    // ...means Connect shows them again instead of connecting.
    await page.click('[data-testid=bench-connect]');
    await panel.waitFor();
    await waitForText(page, '[data-testid=bench-problem]', /acknowledge them, then connect/);
    expect(await page.locator('[data-testid=session-screen]').count()).toBe(0);
    await page.getByRole('button', { name: 'I have read these notes' }).click();
    await expect.poll(() => panel.count()).toBe(0);
    expect(await page.locator('[data-testid=safety-gate]').count()).toBe(0);
    await page.click('[data-testid=nav-design]');
    await page.click('[data-testid=nav-bench]');
    expect(await panel.count()).toBe(0);
  });

  it('connects the emulated board with a stuck register bit and lists the divergences live', async () => {
    await page.selectOption('[data-testid=fault-add]', { index: 1 });
    await page.fill('[data-testid=fault-0]', 'stuck:poured:2:1@40');
    await page.click('[data-testid=bench-connect]');
    await page.locator('[data-testid=session-screen]').waitFor({ timeout: 20_000 });
    await waitForText(page, '[data-testid=session-status]', /live/);
    await expect.poll(async () => Number(await page.locator('[data-counter=divergences]').getAttribute('data-value')), { timeout: 20_000 }).toBeGreaterThan(3);
    await expect.poll(async () => Number(await page.locator('[data-counter=framesPerSec]').getAttribute('data-value')), { timeout: 10_000 }).toBeGreaterThan(100);
    expect(await page.locator('[data-counter=crcErrors]').getAttribute('data-value')).toBe('0');
    await waitForText(page, '[data-testid=divergence-list]', /cycle 40 reg\.poured/);
  });

  it('steps to a divergence: the waveform centres on it with expected beside actual, the diagram marks the states', async () => {
    // Halt the board so the picture holds still.
    await page.click('[data-testid=cmd-halt]');
    const wave = page.locator('[data-testid=wave]');
    const first = page.locator('[data-testid=divergence-list] li button').first();
    const sample = Number(await first.getAttribute('data-sample'));
    await page.keyboard.press('n');
    await expect.poll(() => wave.getAttribute('data-focus')).toBe(String(sample));
    // Cycle 40 is too near the start to be centred; it is in view, and the model's row for poured is drawn.
    expect(Number(await wave.getAttribute('data-view-start'))).toBeLessThanOrEqual(sample);
    expect(Number(await wave.getAttribute('data-view-end'))).toBeGreaterThanOrEqual(sample);
    expect((await wave.getAttribute('data-model-rows'))!.split(' ')).toContain('poured');
    await waitForText(page, '[data-testid=divergence-detail]', /reg\.poured at cycle 40[\s\S]*expected\s+0[\s\S]*board\s+4[\s\S]*bits 2 differ/);
    expect((await page.locator('[data-testid=diagnosis]').innerText()).length).toBeGreaterThan(30);
    // The readout names the board's and the model's value at the centred cycle.
    await waitForText(page, '[data-testid=wave-readout]', new RegExp(`^sample ${sample}: .*poured=4 poured\\(model\\)=0`));
    const diagram = page.locator('[data-testid=state-diagram]');
    await expect.poll(() => diagram.locator('g.state-node.actual').count(), { timeout: 10_000 }).toBe(1);
    expect(await diagram.locator('g.state-node.expected').count()).toBe(1);
    // The canvas shows the model row in its own colour near the centre line.
    const canvasHasModelColour = await page.locator('[data-testid=waveform]').evaluate((c: HTMLCanvasElement) => {
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i] > 190 && d[i + 1] > 140 && d[i + 1] < 190 && d[i + 2] > 230) n++;
      return n;
    });
    expect(canvasHasModelColour).toBeGreaterThan(50);

    // Next and previous, by key and by button.
    const second = Number(await page.locator('[data-testid=divergence-list] li button').nth(1).getAttribute('data-sample'));
    await page.keyboard.press(']');
    await expect.poll(() => wave.getAttribute('data-focus')).toBe(String(second));
    await page.click('[data-testid=div-prev]');
    await expect.poll(() => wave.getAttribute('data-focus')).toBe(String(sample));
    await page.click('[data-testid=div-next]');
    await page.keyboard.press('p');
    await expect.poll(() => wave.getAttribute('data-focus')).toBe(String(sample));

    // A divergence further in is centred exactly.
    const samples = await page.locator('[data-testid=divergence-list] li button').evaluateAll((bs) => bs.map((b) => Number(b.getAttribute('data-sample'))));
    const k = samples.findIndex((x) => x > 150);
    expect(k, `no divergence past sample 150 in ${samples.join(' ')}`).toBeGreaterThan(0);
    const later = page.locator('[data-testid=divergence-list] li button').nth(k);
    const laterSample = samples[k];
    await later.click();
    await expect.poll(() => wave.getAttribute('data-focus')).toBe(String(laterSample));
    expect(Math.abs(Number(await wave.getAttribute('data-centre')) - laterSample)).toBeLessThanOrEqual(1);
    await waitForText(page, '[data-testid=wave-readout]', new RegExp(`^sample ${laterSample}: .*poured\\(model\\)=`));
    await page.setViewportSize({ width: 1400, height: 1180 });
    await page.locator('[data-testid=divergence-detail]').waitFor();
    await shot(page, 'session');
    copyFileSync(path.join(ARTIFACTS, 'session.png'), path.join(__dirname, '..', 'docs', 'screenshot-session.png'));
    await page.setViewportSize({ width: 1400, height: 860 });
  });

  it('disconnects with the likely cause named, and replays the recorded capture to the same result', async () => {
    const live = Number(await page.locator('[data-counter=divergences]').getAttribute('data-value'));
    await page.click('[data-testid=session-stop]');
    await waitForText(page, '[data-testid=session-status]', /ended/);
    await waitForText(page, '[data-testid=hints]', /Bit 2 of reg\.poured may be stuck at 1/);
    const ended = Number(await page.locator('[data-counter=divergences]').getAttribute('data-value'));
    expect(ended).toBeGreaterThanOrEqual(live);
    await page.click('[data-testid=nav-bench]');
    const replay = page.locator('[data-testid^=replay-tank_dosing-]').first();
    await replay.waitFor({ timeout: 10_000 });
    await replay.click();
    await page.locator('[data-testid=session-screen]').waitFor();
    await waitForText(page, '[data-testid=session-status]', /ended/, 30_000);
    await expect.poll(async () => Number(await page.locator('[data-counter=divergences]').getAttribute('data-value'))).toBe(ended);
    await waitForText(page, '[data-testid=hints]', /stuck at 1/);
    await shot(page, 'replay');
  });

  it('ran without console errors (a CSP violation would show here)', () => {
    expect(consoleErrors).toEqual([]);
  });
});
