// The bench safety notes: the usual cautions for powering a board and wiring a USB-UART adapter,
// kept in one place so every shell and screen shows the same words.
import type { SafetyNotes } from '../../core/services/api';

export const SAFETY_NOTES: SafetyNotes = {
  title: 'Before you power or wire a board',
  sections: [
    {
      id: 'supply',
      heading: 'Supply: voltage, current limit, polarity',
      items: [
        "Set the bench supply to the board's rated input voltage before connecting it, with the output off.",
        "Set the current limit a little above the board's expected draw, so a wiring fault trips the limit instead of heating a part.",
        'Check polarity before switching on: red to the positive input, black to ground; for barrel jacks check whether the plug is centre-positive.',
      ],
    },
    {
      id: 'levels',
      heading: 'USB-UART adapter: I/O voltage',
      items: [
        "Match the adapter's I/O voltage to the board's I/O bank. Many FPGA banks are 3.3 V (or lower); a 5 V adapter on a 3.3 V pin can damage the FPGA.",
        'If the adapter has a voltage jumper or switch, set it to the board\'s level before plugging it in; otherwise use a level shifter.',
        "Connect ground between adapter and board, and cross the data lines: adapter TX to the board's RX pin, adapter RX to its TX pin.",
        "Do not feed the adapter's power pin into the board unless the board maker's documentation says that rail may be powered that way.",
      ],
    },
    {
      id: 'esd',
      heading: 'Electrostatic discharge (ESD)',
      items: [
        'Handle boards on a grounded ESD mat while wearing a grounded wrist strap; hold boards by their edges.',
        'Keep boards and modules in antistatic bags when they are off the bench.',
        'ANSI/ESD S20.20 is the published reference for ESD control programs; your lab\'s program may be based on it.',
      ],
    },
    {
      id: 'hotplug',
      heading: 'No hot-plugging',
      items: [
        'Do not plug or unplug headers, jumpers, expansion modules or the adapter while the board is powered.',
        'Switch the supply off, wait for the power LED to go out, change the wiring, check it, then switch on again.',
      ],
    },
  ],
  deferral:
    "These notes are reminders, not a safety procedure. Your lab's own rules and the board maker's documentation come first; where they differ from this panel, follow them.",
};
