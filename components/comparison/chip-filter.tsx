'use client';
// One filter of the comparison (issue 13): every offered value ticked means "all" (an empty list in the spec); the
// last ticked value cannot be unticked, so a filter never silently empties the figure.

export function ChipFilter<T extends string | number>({
  label,
  offered,
  selected,
  onChange,
  testId,
}: {
  label: string;
  offered: { value: T; label: string }[];
  selected: T[];
  onChange: (next: T[]) => void;
  testId?: string;
}) {
  if (offered.length < 2) return null;
  const all = offered.map((o) => o.value);
  const current = selected.length ? selected.filter((v) => all.includes(v)) : all;
  return (
    <span className="inline-flex flex-wrap items-center gap-1.5" data-testid={testId}>
      {label}
      {offered.map((o) => {
        const on = current.includes(o.value);
        return (
          <label key={String(o.value)} className="inline-flex items-center gap-1">
            <input
              type="checkbox"
              checked={on}
              disabled={on && current.length === 1}
              onChange={() => {
                const next = on ? current.filter((x) => x !== o.value) : [...current, o.value];
                onChange(next.length === all.length ? [] : next);
              }}
            />
            {o.label}
          </label>
        );
      })}
    </span>
  );
}
