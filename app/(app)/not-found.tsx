import { NotFoundNotice } from '@/components/shell/not-found-notice';

// HTTP 404 inside the signed-in frame (the header stays, with the navigation).
export default function AppNotFound() {
  return <NotFoundNotice />;
}
