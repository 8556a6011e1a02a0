// Pieces every bench tool's result shows (components/bench/tools-panel.tsx, scale-tools.tsx): the tool's warnings,
// and the pair of buttons that takes its value into the calibration or drops it. Nothing changes until "Use".
import { Button } from '@/components/ui';

export function ToolWarnings({ warnings, testId }: { warnings: string[]; testId?: string }) {
  if (!warnings.length) return null;
  return (
    <ul className="list-disc pl-5 text-micro text-flare-900" data-testid={testId}>
      {warnings.map((w) => (
        <li key={w}>{w}</li>
      ))}
    </ul>
  );
}

/** "Use this …" (runs `onUse`, then closes the result) and "Discard". */
export function UseOrDiscard({
  label,
  onUse,
  onClose,
  testId,
}: {
  label: string;
  onUse: () => void;
  onClose: () => void;
  testId?: string;
}) {
  return (
    <div className="flex gap-2">
      <Button
        size="sm"
        onClick={() => {
          onUse();
          onClose();
        }}
        data-testid={testId}
      >
        {label}
      </Button>
      <Button size="sm" variant="ghost" onClick={onClose}>
        Discard
      </Button>
    </div>
  );
}
