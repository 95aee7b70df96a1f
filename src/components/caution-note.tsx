/**
 * Safety and care notes, shown where the work can hurt someone or something.
 * Written in our own words; they always defer to the facility's rules and the
 * manufacturer's instructions.
 */
const NOTES = {
  acquisition: {
    title: "Before you image beads",
    items: [
      "Immersion oil is a skin and eye irritant: wear gloves as your facility's glove policy says, wipe spills with lens paper, wash your hands afterwards, and never pour oil or oily wipes down a drain.",
      "Never let oil or water reach a dry (air) objective. When you switch from an oil lens to a dry one, check the coverslip for carried-over oil.",
      "High-NA lenses have short working distances: approach the coverslip slowly and stop as soon as the immersion medium makes contact, so the lens is never driven into the slide.",
      "Confocal lasers may be Class 3B: keep interlocks and shutters in place and never look into the beam path.",
    ],
  },
  troubleshooting: {
    title: "Before you touch the optics",
    items: [
      "Clean front lenses only with fresh lens paper, outward from the centre, without pressure; use a solvent only if the lens manufacturer allows it.",
      "Alignment, opening covers and removing objectives are for facility staff or the manufacturer's engineer.",
    ],
  },
  planner: {
    title: "Switching objectives or immersion media",
    items: [
      "Use the immersion medium the objective was designed for, at its rated temperature, and don't mix oils from different suppliers.",
      "Immersion oil is a skin and eye irritant: handle it as its safety data sheet says.",
      "Never let oil or water reach a dry objective, and approach the coverslip slowly with high-NA, short-working-distance lenses.",
    ],
  },
} as const;

/** `open` renders the note expanded (e.g. on a printed page, where nothing can be clicked). */
export function CautionNote({ kind, open = false }: { kind: keyof typeof NOTES; open?: boolean }) {
  const note = NOTES[kind];
  return (
    <details
      open={open}
      className="rounded-lg border border-watch/30 bg-watch/5 px-4 py-3 text-sm"
      data-testid="caution-note"
    >
      <summary className="cursor-pointer font-semibold text-ink">⚠ {note.title}</summary>
      <ul className="mt-2 list-disc space-y-1 pl-5 text-ink-soft">
        {note.items.map((t) => (
          <li key={t}>{t}</li>
        ))}
      </ul>
      <p className="mt-2 text-xs text-ink-soft">
        These are reminders, not instructions: your facility&apos;s own rules and the manufacturer&apos;s
        instructions take precedence.
      </p>
    </details>
  );
}
