'use client';

import { type InputHTMLAttributes, type ReactNode, useId } from 'react';
import { cx } from './cx';
import { inputClass } from './input-class';

export interface FieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, 'children'> {
  label: string;
  /** The message shown under the control; also marks it invalid for assistive technology. */
  error?: string | null;
  hint?: ReactNode;
  /**
   * A custom control (select, textarea…). It receives no props from Field: give it `id={controlId}` through the
   * render function to keep the label connected.
   */
  children?: (control: { id: string; describedBy: string | undefined; invalid: boolean }) => ReactNode;
}

/** Label + control + hint + error. Without `children` it renders an <input> with the remaining props. */
export function Field({ label, error, hint, children, id: givenId, className, ...inputProps }: FieldProps) {
  const autoId = useId();
  const id = givenId ?? `f${autoId.replace(/:/g, '')}`;
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={cx('space-y-1.5', className)}>
      <label htmlFor={id} className="block text-small font-medium text-ink-800">
        {label}
      </label>
      {children ? (
        children({ id, describedBy, invalid: !!error })
      ) : (
        <input
          id={id}
          aria-invalid={error ? true : undefined}
          aria-describedby={describedBy}
          className={inputClass(!!error)}
          {...inputProps}
        />
      )}
      {hint ? (
        <p id={hintId} className="text-small text-ink-500">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={errorId} className="text-small text-fault-600" data-testid="field-error">
          {error}
        </p>
      ) : null}
    </div>
  );
}
