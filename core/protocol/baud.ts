// Baud planning for the probe's UART: the divisor (clock cycles per bit) for a clock and a baud, the baud
// actually reached, and whether the error fits the tolerance budget of one end of a UART link.

/** The transmitter needs at least two clock cycles per bit to count a bit time at all. */
export const TX_MIN_DIVISOR = 2;
/**
 * The receiver samples mid-bit with a resolution of one clock; 16 cycles per bit make that at least as fine
 * as the usual 16x-oversampling receiver, which the tolerance figure below assumes.
 */
export const RX_MIN_DIVISOR = 16;
/** Verilog integer parameters are 32-bit signed. */
export const MAX_DIVISOR = 0x7fffffff;
/**
 * Rate error allowed at one end: 2%. Common practice quotes about ±2% per side for 8N1 with a 16x receiver
 * (about 4-5% total between the two ends). Our own bound: the stop bit is sampled 9.5 bit times after the
 * start edge, with up to 1/16 bit of start-edge uncertainty, so the ends may differ by (0.5 - 1/16) / 9.5 = 4.6%.
 */
export const BAUD_TOLERANCE = 0.02;

export type BaudPlan = {
  clockHz: number;
  baud: number;
  /** Clock cycles per bit: the DIVISOR parameter of ts_uart_tx / ts_uart_rx. */
  divisor: number;
  actualBaud: number;
  /** (actualBaud - baud) / baud. */
  relativeError: number;
  /** Non-fatal remarks, e.g. an error beyond BAUD_TOLERANCE. */
  warnings: string[];
};

export type BaudPlanResult = { ok: true; plan: BaudPlan } | { ok: false; error: string };

/**
 * Divisor for `clockHz` and `baud`, rounded to the nearest integer. Fails with a message when the numbers
 * are not positive, or when the clock is too slow for the receiver (fewer than 16 cycles per bit) or, with
 * `receiver: false`, for the transmitter alone (fewer than 2).
 */
export function baudPlan(clockHz: number, baud: number, options: { receiver?: boolean } = {}): BaudPlanResult {
  if (typeof clockHz !== 'number' || !Number.isFinite(clockHz) || clockHz <= 0) {
    return { ok: false, error: `baud plan: the clock frequency must be a positive number of Hz (got ${String(clockHz)})` };
  }
  if (typeof baud !== 'number' || !Number.isFinite(baud) || baud <= 0) {
    return { ok: false, error: `baud plan: the baud must be a positive number (got ${String(baud)})` };
  }
  const receiver = options.receiver ?? true;
  const minimum = receiver ? RX_MIN_DIVISOR : TX_MIN_DIVISOR;
  const divisor = Math.round(clockHz / baud);
  if (divisor < minimum) {
    const who = receiver ? 'the receiver' : 'the transmitter';
    return {
      ok: false,
      error: `baud plan: a ${formatHz(clockHz)} clock cannot reach ${baud} baud: ${who} needs at least ${minimum} clock cycles per bit (a clock of ${formatHz(minimum * baud)} or more), but there would be ${(clockHz / baud).toFixed(2)}`,
    };
  }
  if (divisor > MAX_DIVISOR) {
    return { ok: false, error: `baud plan: ${baud} baud from a ${formatHz(clockHz)} clock needs ${divisor} cycles per bit, more than the ${MAX_DIVISOR} a Verilog parameter holds` };
  }
  const actualBaud = clockHz / divisor;
  const relativeError = (actualBaud - baud) / baud;
  const warnings: string[] = [];
  if (Math.abs(relativeError) > BAUD_TOLERANCE) {
    warnings.push(
      `baud plan: ${formatHz(clockHz)} / ${divisor} gives ${actualBaud.toFixed(1)} baud, ${(relativeError * 100).toFixed(2)}% off ${baud}; more than the ±${BAUD_TOLERANCE * 100}% one end of the link may use. Pick another baud or clock.`,
    );
  }
  return { ok: true, plan: { clockHz, baud, divisor, actualBaud, relativeError, warnings } };
}

function formatHz(hz: number): string {
  if (hz >= 1e6) return `${+(hz / 1e6).toFixed(6)} MHz`;
  if (hz >= 1e3) return `${+(hz / 1e3).toFixed(6)} kHz`;
  return `${hz} Hz`;
}
