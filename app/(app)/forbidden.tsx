import { currentRefusal, Forbidden } from '@/components/shell/forbidden';

// HTTP 403 inside the signed-in frame: pages call refusePage(sentence), which records the sentence and throws.
export default function ForbiddenPage() {
  const { message, title } = currentRefusal();
  return <Forbidden message={message} title={title} />;
}
