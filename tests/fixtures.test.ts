// Each demo design against a calculation worked out by hand from the design text and its
// stimulus, written out below; both model engines must reproduce it. No value here was taken
// from the tool's own output.
import { describe, expect, it } from 'vitest';
import { simulate, type TraceRow } from '../core/model/trace';
import type { Machine } from '../core/ir/schema';
import { loadFixture } from './support/load';

function view(m: Machine, rows: TraceRow[]) {
  return rows.map((r) => ({
    state: m.states[r.state].name,
    reg: (name: string) => {
      const i = m.registers.findIndex((x) => x.name === name);
      const t = m.registers[i].type;
      const v = r.regs[i];
      return t.signed && v >> BigInt(t.width - 1) ? v - (1n << BigInt(t.width)) : v;
    },
    out: (name: string) => {
      const i = m.outputs.findIndex((x) => x.name === name);
      const t = m.outputs[i].type;
      const v = r.outputs[i];
      return t.signed && v >> BigInt(t.width - 1) ? v - (1n << BigInt(t.width)) : v;
    },
  }));
}

for (const engine of ['interpreter', 'compiled'] as const) {
  describe(`demo designs against hand-worked traces (${engine})`, () => {
    it('tank_dosing: a 3 mL dose, then a refused 250 mL dose, then an aborted 2 mL dose', () => {
      const { machine: m, rows } = loadFixture('tank_dosing');
      const t = view(m, simulate(m, rows, rows.length, engine));
      // Hand-worked from tank_dosing.tsm and tank_dosing.csv:
      // c0 Idle, go_btn=0: stay.  c1 Idle, go_btn=1, dose=3 (1..200): go Prime, target<-3, poured<-0.
      // c2 Prime: valve=1, go Pump.  c3 Pump: pulse -> poured 0->1.  c4 no pulse: stay, poured 1.
      // c5, c6 pulses -> poured 2, 3.  c7: poured==target (3) wins over pulse -> Finish.
      // c8 Finish: done=1, runs 0->1, go Idle.  c9 Idle: shown = poured = 3.
      // c10 dose=250 > MAX_DOSE: stay.  c11 dose=0: stay.  c12 dose=2: go Prime, target<-2, poured<-0.
      // c13 Prime.  c14 Pump, pulse: poured 0->1.  c15 abort: go Idle.  c16 Idle.
      const states = ['Idle', 'Idle', 'Prime', 'Pump', 'Pump', 'Pump', 'Pump', 'Pump', 'Finish', 'Idle', 'Idle', 'Idle', 'Idle', 'Prime', 'Pump', 'Pump', 'Idle'];
      expect(t.map((r) => r.state)).toEqual(states);
      expect(t.map((r) => r.reg('poured'))).toEqual([0n, 0n, 0n, 0n, 1n, 1n, 2n, 3n, 3n, 3n, 3n, 3n, 3n, 0n, 0n, 1n, 1n]);
      expect(t[2].reg('target')).toBe(3n);
      expect(t[13].reg('target')).toBe(2n);
      expect(t[8].out('done')).toBe(1n);
      expect(t[9].reg('runs')).toBe(1n);
      expect(t[16].reg('runs')).toBe(1n); // the aborted run is not counted
      expect(t.map((r) => r.out('pump'))).toEqual(states.map((s) => (s === 'Pump' ? 1n : 0n)));
      expect(t.map((r) => r.out('valve'))).toEqual(states.map((s) => (s === 'Pump' || s === 'Prime' ? 1n : 0n)));
      expect(t[9].out('shown')).toBe(3n);
    });

    it('trim_servo: signed error, integration with clamping at +/-400, drive = integral + error/2', () => {
      const { machine: m, rows } = loadFixture('trim_servo');
      const t = view(m, simulate(m, rows, rows.length, engine));
      // Hand-worked (two's complement, arithmetic shift right rounds toward minus infinity):
      // c0 Wait sample: err <- 300-100 = 200.  c1 Diff: integ <- 0+200 = 200.
      // c2 Limit: 200 within +/-400 -> drive <- 200 + (200>>1) = 300.
      // c3 Wait: err <- 200.  c4 Diff: integ <- 400.  c5 Limit: 400 > 400 is false -> drive <- 400+100 = 500.
      // c6 Wait: err <- -500-700 = -1200.  c7 Diff: integ <- 400-1200 = -800.
      // c8 Limit: -800 < -400 -> integ <- -400, drive <- -400, saturated = 1 (Mealy output, this cycle).
      // c10 Wait: err <- -2048-2047 = -4095 (fits s13, which holds -4096..4095).
      // c11 Diff: integ <- -400-4095 = -4495.  c12 Limit: clamp to -400, saturated = 1.
      // c13 Wait: err <- 0-(-7) = 7.  c14 Diff: integ <- -393.  c15 Limit: drive <- -393 + (7>>1 = 3) = -390.
      expect(t.map((r) => r.state).join(' ')).toBe('Wait Diff Limit Wait Diff Limit Wait Diff Limit Wait Wait Diff Limit Wait Diff Limit Wait');
      expect(t[1].reg('err')).toBe(200n);
      expect(t[3].reg('drive')).toBe(300n);
      expect(t[6].reg('drive')).toBe(500n);
      expect(t[7].reg('err')).toBe(-1200n);
      expect(t[8].reg('integ')).toBe(-800n);
      expect(t[8].out('saturated')).toBe(1n);
      expect(t[9].reg('integ')).toBe(-400n);
      expect(t[9].out('heat')).toBe(-400n);
      expect(t[11].reg('err')).toBe(-4095n);
      expect(t[12].reg('integ')).toBe(-4495n);
      expect(t[12].out('saturated')).toBe(1n);
      expect(t[13].reg('integ')).toBe(-400n);
      expect(t[15].reg('integ')).toBe(-393n);
      expect(t[16].reg('drive')).toBe(-390n);
      expect(t[16].out('heat')).toBe(-390n);
      expect(t.filter((r) => r.out('saturated') === 1n).length).toBe(2);
    });

    it('bottle_capper: one bottle passes, one is rejected after two retries, then an emergency stop', () => {
      const { machine: m, rows } = loadFixture('bottle_capper');
      const t = view(m, simulate(m, rows, rows.length, engine));
      // Hand-worked from bottle_capper.tsm and bottle_capper.csv (52 cycles):
      const expected = [
        'Stopped', // c0 run=1 -> Feed
        'Feed', // c1 no bottle
        'Feed', // c2 bottle_eye -> Settle, timer<-0
        'Settle', 'Settle', 'Settle', 'Settle', // c3..c6: timer 0,1,2,3; at 3 -> WaitCap
        'WaitCap', // c7 cap_ready -> Grip, tries<-0
        'Grip', 'Lower', // c8, c9 (Lower: peak<-0)
        'Spin', 'Spin', 'Spin', 'Spin', // c10 torque 20>0 peak<-20; c11 50 peak<-50; c12 50=50 stay; c13 30<50 -> Release
        'Release', 'Inspect', // c14, c15: peak 50 in [40,60] -> Pass
        'Pass', // c16 good<-1
        'Clear', 'Clear', // c17 bottle still seen; c18 gone -> Feed
        'Feed', // c19 bottle_eye -> Settle
        'Settle', 'Settle', 'Settle', 'Settle', // c20..c23
        'WaitCap', 'Grip', 'Lower', // c24..c26
        'Spin', 'Spin', // c27 torque 90 peak<-90; c28 10<90 -> Release
        'Release', 'Inspect', // c29, c30: 90 out of range, tries 0 -> Grip, tries<-1
        'Grip', 'Lower', 'Spin', 'Spin', // c31..c34: peak 5 then torque 0 < 5 -> Release
        'Release', 'Inspect', // c35, c36: 5 out of range, tries 1 -> Grip, tries<-2
        'Grip', 'Lower', 'Spin', 'Spin', 'Spin', // c37..c41: c39 torque 0 = peak 0 stays; c40 peak<-100; c41 99<100
        'Release', 'Inspect', // c42, c43: 100 out of range and tries == 2 -> Reject
        'Reject', // c44 bad<-1
        'Clear', 'Clear', // c45 bottle seen; c46 gone -> Feed (Clear ignores estop)
        'Feed', // c47 estop -> Halted
        'Halted', 'Halted', 'Halted', // c48 estop; c49 run still 1; c50 run=0, estop=0 -> Stopped
        'Stopped', // c51
      ];
      expect(t.map((r) => r.state)).toEqual(expected);
      expect(t[6].reg('timer')).toBe(3n);
      expect(t[7].reg('timer')).toBe(4n); // Settle's own transfer still happens on the cycle it leaves
      expect(t[12].reg('peak')).toBe(50n);
      expect(t[17].reg('good')).toBe(1n);
      expect(t[31].reg('tries')).toBe(1n);
      expect(t[37].reg('tries')).toBe(2n);
      expect(t[41].reg('peak')).toBe(100n);
      expect(t[44].out('reject_arm')).toBe(1n);
      expect(t[45].reg('bad')).toBe(1n);
      expect(t[48].out('alarm')).toBe(1n);
      expect(t[51].out('good_count')).toBe(1n);
      expect(t[10].out('spindle')).toBe(1n);
      expect(t[10].out('gripper')).toBe(1n);
    });

    it('event_stamper: 48-bit time across the 32-bit carry, 52-bit tag, 40-bit span', () => {
      const { machine: m, rows } = loadFixture('event_stamper');
      const t = view(m, simulate(m, rows, rows.length, engine));
      // now starts at 0xFFFF_FFFD and counts every cycle: c3 holds 0x1_0000_0000 (carry into bit 32).
      // c1 arm -> Armed (hits<-0).  c3 Armed, hit, channel 9: first <- 0x1_0000_0000,
      // tag <- 9 ++ now = 9 * 2^48 + 2^32, hits <- 1.  c4..c8 Stamped: stamp_hi = 0x0001, stamp_lo = 0.
      // c5 hit: span <- now - first = 0x1_0000_0002 - 0x1_0000_0000 = 2, hits 2.
      // c7 hit: span <- 4, hits 3.  c8 arm=0 -> Idle.
      expect(t.map((r) => r.reg('now'))).toEqual(Array.from({ length: 10 }, (_, c) => 0xfffffffdn + BigInt(c)));
      expect(t.map((r) => r.state).join(' ')).toBe('Idle Idle Armed Armed Stamped Stamped Stamped Stamped Stamped Idle');
      expect(t[4].reg('first')).toBe(0x1_0000_0000n);
      expect(t[4].reg('tag')).toBe(9n * 2n ** 48n + 2n ** 32n);
      expect(t[4].out('stamp_hi')).toBe(1n);
      expect(t[4].out('stamp_lo')).toBe(0n);
      expect(t[6].reg('span')).toBe(2n);
      expect(t[8].reg('span')).toBe(4n);
      expect(t[8].reg('hits')).toBe(3n);
      expect(t[9].out('ready')).toBe(0n);
      expect(t[4].out('ready')).toBe(1n);
    });

    it('link_scrambler: LFSR steps and whitening agree with an independent LFSR written here', () => {
      const { machine: m, rows } = loadFixture('link_scrambler');
      const t = view(m, simulate(m, rows, rows.length, engine));
      // Independent reference: the 16-bit Fibonacci LFSR with taps 16,14,13,11 as commonly shown
      // (x^16 + x^14 + x^13 + x^11 + 1; feedback = bit0 ^ bit2 ^ bit3 ^ bit5, shifted in at bit 15).
      const stepLfsr = (x: number) => ((x >> 1) | ((((x >> 0) ^ (x >> 2) ^ (x >> 3) ^ (x >> 5)) & 1) << 15)) & 0xffff;
      // Worked by hand: 0xACE1 -> 0x5670 (feedback 1^0^0^1 = 0), 0x5670 -> 0xAB38 (0^0^0^1 = 1).
      expect(stepLfsr(0xace1)).toBe(0x5670);
      expect(stepLfsr(0x5670)).toBe(0xab38);
      let lfsr = 0xace1;
      let check = 0xff;
      let sent = 0;
      let inRun = false;
      rows.forEach((row, c) => {
        const [load, seed, data, valid] = row.map(Number);
        expect(t[c].reg('lfsr')).toBe(BigInt(lfsr));
        expect(t[c].reg('check')).toBe(BigInt(check));
        expect(t[c].reg('sent')).toBe(BigInt(sent));
        if (!inRun) {
          if (load) {
            lfsr = seed;
            inRun = true;
          }
          return;
        }
        if (load && seed === 0) inRun = false;
        else if (load) {
          lfsr = seed;
          sent = 0;
        } else if (valid) {
          expect(t[c].out('tx')).toBe(BigInt(data ^ (lfsr & 0xff)));
          expect(t[c].out('tx_ok')).toBe(1n);
          lfsr = stepLfsr(lfsr);
          sent = (sent + 1) & 0xfff;
          check = ~((check << 1) ^ data) & 0xff;
        } else expect(t[c].out('tx_ok')).toBe(0n);
      });
    });

    it('link_scrambler: the LFSR is maximal length, period 65535 (x^16+x^14+x^13+x^11+1 is primitive)', () => {
      const { machine: m } = loadFixture('link_scrambler');
      // Published property of this tap set (maximal-length LFSR tables, e.g. Xilinx XAPP052; from memory):
      // the sequence from any non-zero seed returns to it after exactly 2^16 - 1 steps.
      const header = [[1n, 0xace1n, 0n, 0n]];
      const steps: bigint[][] = Array.from({ length: 65535 }, () => [0n, 0n, 0n, 1n]);
      const trace = simulate(m, [...header, ...steps, [0n, 0n, 0n, 0n], [0n, 0n, 0n, 0n]], 65538, engine);
      const lfsrIndex = m.registers.findIndex((r) => r.name === 'lfsr');
      // c0 loads the seed, so c1 holds it; each valid cycle steps once, so after k steps it is c(1+k).
      const firstReturn = trace.findIndex((r, c) => c > 1 && r.regs[lfsrIndex] === 0xace1n);
      expect(firstReturn).toBe(1 + 65535);
    });
  });
}
