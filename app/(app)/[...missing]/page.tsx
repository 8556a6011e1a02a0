import { notFound } from 'next/navigation';

// Any address no other page claims: answered 404 by app/(app)/not-found.tsx inside the app's header, rather than
// by the bare root page. Static routes and /api always win over this catch-all.
export default function MissingPage(): never {
  notFound();
}
