// Small line icons for the rail and buttons, drawn here so the app carries no icon font.

export type IconName = 'design' | 'machine' | 'hdl' | 'wave' | 'bench' | 'session' | 'shield';

const PATHS: Record<IconName, string> = {
  design: 'M4 5h12M4 9h8M4 13h10M4 17h6',
  machine: 'M3 6h5v4H3zM13 12h5v4h-5zM8 8h3v6h2',
  hdl: 'M7 5L3 10l4 5M13 5l4 5-4 5M11 4l-2 12',
  wave: 'M2 14h3V6h4v8h3V6h3v8h4',
  session: 'M2 8h3V4h4v4h3V4h3v4h3M2 16h3v-4h4v4h3v-4h2l1 4h3',
  bench: 'M3 16h15M5 16V9h11v7M8 9V5h5v4',
  shield: 'M10 2l6 3v5c0 4-3 6.5-6 8-3-1.5-6-4-6-8V5z',
};

export function Icon({ name }: { name: IconName }) {
  return (
    <svg className="icon" width="20" height="20" viewBox="0 0 20 20" aria-hidden>
      <path d={PATHS[name]} fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" strokeLinecap="round" />
    </svg>
  );
}
