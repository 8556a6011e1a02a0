'use client';

import Link from 'next/link';
import { signOut } from 'next-auth/react';
import { useEffect, useRef, useState } from 'react';

export interface UserMenuProps {
  name: string;
  email: string;
  roles: string[];
}

function initials(name: string): string {
  const parts = name.trim().split(/\s+/).filter(Boolean);
  return ((parts[0]?.[0] ?? '') + (parts.length > 1 ? (parts.at(-1)?.[0] ?? '') : '')).toUpperCase() || '?';
}

/** The signed-in user's name, roles and the sign-out button. */
export function UserMenu({ name, email, roles }: UserMenuProps) {
  const [open, setOpen] = useState(false);
  const [signingOut, setSigningOut] = useState(false);
  const ref = useRef<HTMLDivElement>(null);

  useEffect(() => {
    if (!open) return;
    const onDown = (e: MouseEvent) => {
      if (ref.current && !ref.current.contains(e.target as Node)) setOpen(false);
    };
    const onKey = (e: KeyboardEvent) => e.key === 'Escape' && setOpen(false);
    document.addEventListener('mousedown', onDown);
    document.addEventListener('keydown', onKey);
    return () => {
      document.removeEventListener('mousedown', onDown);
      document.removeEventListener('keydown', onKey);
    };
  }, [open]);

  return (
    <div className="relative" ref={ref}>
      <button
        type="button"
        aria-haspopup="menu"
        aria-expanded={open}
        data-testid="user-menu"
        onClick={() => setOpen((v) => !v)}
        className="flex items-center gap-2 rounded-full py-1 pr-2.5 pl-1 text-small text-ink-700 hover:bg-ink-100 focus-visible:outline-2 focus-visible:outline-lobe-500"
      >
        <span className="flex size-7 items-center justify-center rounded-full bg-lobe-100 text-micro font-semibold text-lobe-800">
          {initials(name)}
        </span>
        <span className="hidden max-w-[10rem] truncate sm:inline">{name}</span>
      </button>
      {open ? (
        <div
          role="menu"
          className="absolute right-0 z-30 mt-2 w-72 rounded-panel bg-white p-1.5 shadow-lg ring-1 ring-ink-100"
        >
          <div className="px-3 py-2.5">
            <p className="truncate text-body font-medium text-ink-900">{name}</p>
            <p className="truncate text-small text-ink-500">{email}</p>
            {roles.length ? (
              <ul className="mt-2 space-y-0.5 text-small text-ink-600" data-testid="user-roles">
                {roles.map((r) => (
                  <li key={r}>{r}</li>
                ))}
              </ul>
            ) : null}
          </div>
          <div className="my-1 border-t border-ink-100" />
          <a
            href="/account"
            role="menuitem"
            data-testid="account-link"
            className="block w-full rounded-md px-3 py-2 text-left text-body text-ink-800 hover:bg-ink-50"
          >
            Your account and password
          </a>
          <Link
            href="/settings/notifications"
            role="menuitem"
            onClick={() => setOpen(false)}
            className="block w-full rounded-md px-3 py-2 text-left text-body text-ink-800 hover:bg-ink-50"
          >
            E-mail notifications
          </Link>
          <button
            type="button"
            role="menuitem"
            data-testid="sign-out"
            disabled={signingOut}
            onClick={() => {
              setSigningOut(true);
              void signOut({ callbackUrl: '/sign-in?signedOut=1' });
            }}
            className="w-full rounded-md px-3 py-2 text-left text-body text-ink-800 hover:bg-ink-50 disabled:text-ink-400"
          >
            {signingOut ? 'Signing out…' : 'Sign out'}
          </button>
        </div>
      ) : null}
    </div>
  );
}
