'use client';
// Small controls of the calibration bench: a slider with its number beside it, a switch, a group heading.
import { type ReactNode, useId } from 'react';
import { compactInputClass } from '@/components/ui/input-class';

export function Knob({
  label,
  unit,
  value,
  min,
  max,
  step,
  onChange,
  disabled,
  testId,
}: {
  label: string;
  unit?: string;
  value: number;
  min: number;
  max: number;
  step: number;
  onChange: (v: number) => void;
  disabled?: boolean;
  testId?: string;
}) {
  const id = useId();
  const clamp = (v: number) => Math.min(max, Math.max(min, v));
  return (
    <div className="grid grid-cols-[8.5rem_1fr_6.5rem] items-center gap-2">
      <label htmlFor={id} className="text-small text-ink-700">
        {label}
        {unit ? <span className="text-ink-400"> ({unit})</span> : null}
      </label>
      <input
        type="range"
        aria-label={`${label} slider`}
        min={min}
        max={max}
        step={step}
        value={clamp(value)}
        disabled={disabled}
        onChange={(e) => onChange(Number(e.target.value))}
        className="w-full accent-lobe-600"
        data-testid={testId ? `${testId}-slider` : undefined}
      />
      <input
        id={id}
        type="number"
        step={step}
        value={Number.isFinite(value) ? Number(value.toPrecision(8)) : ''}
        disabled={disabled}
        onChange={(e) => {
          const v = Number(e.target.value);
          if (e.target.value !== '' && Number.isFinite(v)) onChange(v);
        }}
        className={compactInputClass('w-full')}
        data-testid={testId}
      />
    </div>
  );
}

export function Switch({
  label,
  checked,
  onChange,
  disabled,
  hint,
  testId,
}: {
  label: string;
  checked: boolean;
  onChange: (v: boolean) => void;
  disabled?: boolean;
  hint?: ReactNode;
  testId?: string;
}) {
  return (
    <label className="flex items-start gap-2 text-small text-ink-700">
      <input
        type="checkbox"
        className="mt-0.5 accent-lobe-600"
        checked={checked}
        disabled={disabled}
        onChange={(e) => onChange(e.target.checked)}
        data-testid={testId}
      />
      <span>
        {label}
        {hint ? <span className="block text-micro text-ink-500">{hint}</span> : null}
      </span>
    </label>
  );
}

export function Group({ title, children, aside }: { title: string; children: ReactNode; aside?: ReactNode }) {
  return (
    <fieldset className="space-y-2 border-t border-ink-100 pt-3 first:border-t-0 first:pt-0">
      <legend className="flex w-full items-center justify-between text-micro font-semibold tracking-wide text-ink-500 uppercase">
        <span>{title}</span>
        {aside}
      </legend>
      {children}
    </fieldset>
  );
}
