// Colours the canvas and SVG views draw with; styles.css declares the same values for the HTML parts.

export const PALETTE = {
  bg: '#101418',
  panel: '#171d23',
  panel2: '#1e262e',
  line: '#2a343e',
  grid: '#202a33',
  text: '#d9e1e8',
  muted: '#8796a5',
  accent: '#e9a23b',
  teal: '#5cc8c0',
  state: '#8fb4ff',
  error: '#ff6b6b',
  warn: '#f0c94a',
  ok: '#6fd08c',
  bus: '#5cc8c0',
  busy: '#3b4a57',
  /** The model's expected values beside the board's, in a session. */
  model: '#d7a6ff',
};

/** Distinct fills for states in the waveform, cycled by state index. */
export const STATE_FILLS = ['#2c3f66', '#3d2f5c', '#23504a', '#5a3b22', '#4d2a39', '#33472a', '#224a5c', '#53482a'];
