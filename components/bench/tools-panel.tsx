'use client';
// The bench's fitting tools (issue 15, SCIENCE.md §7): each runs in a worker of its own on the raw frame, shows its
// value with its standard error, how well it fits and its warnings, and changes the calibration only when the
// analyst accepts it.
import { useEffect, useRef, useState } from 'react';
import { formatNumber } from '@/components/plots/scales';
import { XYPlot } from '@/components/plots/xy-plot';
import { Button, ErrorState, Panel } from '@/components/ui';
import type { DetectorCalibration } from '@/reduction/formats';
import type { BenchFrame } from './compute';
import { SymmetryResidual } from './residual-image';
import { ToolWarnings, UseOrDiscard } from './tool-result';
import type { BenchTool, ToolAnswer } from './tools';
import { createTrialRunner } from './use-bench-worker';

const SYMMETRY_WORDS: Record<string, string> = {
  inversion: 'inversion symmetry (p → −p)',
  mirror: 'mirror symmetry about the polarization axis',
  'three-fold': 'three-fold rotational symmetry',
};

export function ToolsPanel({
  frame,
  calibration,
  ringPx,
  onAccept,
}: {
  frame: BenchFrame;
  calibration: DetectorCalibration;
  /** The bench's current ring radius in pixels (where the ring tools look), or null. */
  ringPx: number | null;
  onAccept: (patch: Partial<DetectorCalibration>) => void;
}) {
  const runner = useRef<ReturnType<typeof createTrialRunner> | null>(null);
  const [running, setRunning] = useState<BenchTool | null>(null);
  const [answer, setAnswer] = useState<ToolAnswer | null>(null);
  const [error, setError] = useState<string | null>(null);
  useEffect(
    () => () => {
      runner.current?.close();
      runner.current = null;
    },
    [],
  );

  async function run(tool: BenchTool) {
    runner.current ??= createTrialRunner();
    setRunning(tool);
    setError(null);
    setAnswer(null);
    try {
      setAnswer(await runner.current.tool(frame, calibration, tool, ringPx));
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setRunning(null);
    }
  }

  return (
    <Panel
      title="Fitting tools"
      description="Each tool fits the raw frame of this step and shows its result; nothing changes until you use it."
      data-testid="bench-tools"
    >
      <div className="flex flex-wrap gap-2">
        <Button
          size="sm"
          variant="secondary"
          onClick={() => run('centre')}
          isLoading={running === 'centre'}
          disabled={running !== null}
          data-testid="tool-centre"
        >
          Find the centre from the symmetry
        </Button>
        <Button
          size="sm"
          variant="secondary"
          onClick={() => run('hot-pixels')}
          isLoading={running === 'hot-pixels'}
          disabled={running !== null}
          data-testid="tool-hot-pixels"
        >
          Find hot pixels
        </Button>
        <Button
          size="sm"
          variant="secondary"
          onClick={() => run('ring')}
          isLoading={running === 'ring'}
          disabled={running !== null || ringPx === null}
          data-testid="tool-ring"
        >
          Fit a circle to the ring
        </Button>
        <Button
          size="sm"
          variant="secondary"
          onClick={() => run('ellipse')}
          isLoading={running === 'ellipse'}
          disabled={running !== null || ringPx === null}
          data-testid="tool-ellipse"
        >
          Fit the detector ellipse
        </Button>
      </div>
      <p className="mt-2 text-micro text-ink-500">
        The ring tools look within ±35 % of the fitted radius about the current centre. Fit the ellipse only to a
        feature known to be round: an isotropic ring, not the torus of light that is not verified circular.
      </p>
      {error ? (
        <div className="mt-3">
          <ErrorState message={error} />
        </div>
      ) : null}
      {answer?.tool === 'centre' ? (
        <div className="mt-3 space-y-2 text-small text-ink-800" data-testid="tool-centre-result">
          <p>
            Centre{' '}
            <strong className="font-mono">
              x {formatNumber(answer.x, 5)} ± {formatNumber(answer.errX, 2)}, y {formatNumber(answer.y, 5)} ±{' '}
              {formatNumber(answer.errY, 2)} px
            </strong>{' '}
            from the {SYMMETRY_WORDS[answer.symmetry] ?? answer.symmetry}.
          </p>
          <p className="text-micro text-ink-500">
            {answer.reason} Misfit per pixel {formatNumber(answer.chi2PerPixel, 3)}, residual rms{' '}
            {formatNumber(answer.residualRms, 3)} σ{answer.converged ? '' : ' · the search did not converge'}.
          </p>
          <SymmetryResidual image={answer.residualImage} nX={answer.nX} nY={answer.nY} />
          {answer.warnings.length ? (
            <ul className="list-disc pl-5 text-micro text-flare-900">
              {answer.warnings.map((w) => (
                <li key={w}>{w}</li>
              ))}
            </ul>
          ) : null}
          <UseOrDiscard
            label="Use this centre"
            testId="tool-centre-accept"
            onUse={() =>
              onAccept({ center_px: [answer.x, answer.y], center_err_px: Math.max(answer.errX, answer.errY) })
            }
            onClose={() => setAnswer(null)}
          />
        </div>
      ) : null}
      {answer?.tool === 'ring' ? (
        <div className="mt-3 space-y-2 text-small text-ink-800" data-testid="tool-ring-result">
          <p>
            Circle{' '}
            <strong className="font-mono">
              centre x {formatNumber(answer.x, 5)} ± {formatNumber(answer.errX, 2)}, y {formatNumber(answer.y, 5)} ±{' '}
              {formatNumber(answer.errY, 2)} px, radius {formatNumber(answer.r, 5)} ± {formatNumber(answer.errR, 2)} px
            </strong>{' '}
            (algebraic fit refined geometrically, {answer.points} points over {formatNumber(answer.coverageDeg, 3)}°,
            residual rms {formatNumber(answer.residualRms, 3)} px).
          </p>
          <XYPlot
            series={[
              {
                id: 'ring-residual',
                label: 'ring radius − circle',
                color: '#253043',
                mode: 'points',
                points: answer.residualAzimuthDeg.map((x, i) => ({ x, y: answer.residualPx[i]! })),
              },
            ]}
            guides={[]}
            xLabel="azimuth (°)"
            yLabel="radial residual (px)"
            xDomain={[-180, 180]}
            height={160}
            data-testid="tool-ring-residual"
          />
          <ToolWarnings warnings={answer.warnings} />
          <UseOrDiscard
            label="Use this centre"
            onUse={() =>
              onAccept({ center_px: [answer.x, answer.y], center_err_px: Math.max(answer.errX, answer.errY) })
            }
            onClose={() => setAnswer(null)}
          />
        </div>
      ) : null}
      {answer?.tool === 'ellipse' ? (
        <div className="mt-3 space-y-2 text-small text-ink-800" data-testid="tool-ellipse-result">
          <p>
            Detector stretch{' '}
            <strong className="font-mono">
              ratio {formatNumber(answer.ratio, 5)} ± {formatNumber(answer.errRatio, 2)} along{' '}
              {formatNumber(answer.axisDeg, 4)}° ± {formatNumber(answer.errAxisDeg, 2)}°
            </strong>{' '}
            ({answer.points} points, residual rms {formatNumber(answer.residualRms, 3)} px).
          </p>
          <ToolWarnings warnings={answer.warnings} />
          <UseOrDiscard
            label="Use this stretch"
            onUse={() => onAccept({ detector_ellipticity: { ratio: answer.ratio, axis_deg: answer.axisDeg } })}
            onClose={() => setAnswer(null)}
          />
        </div>
      ) : null}
      {answer?.tool === 'hot-pixels' ? (
        <div className="mt-3 space-y-2 text-small text-ink-800" data-testid="tool-hot-result">
          <p>
            {answer.pixels.length} hot pixel{answer.pixels.length === 1 ? '' : 's'} found (counts far above their
            neighbours for Poisson noise; expected false alarms {formatNumber(answer.expectedFalseAlarms, 2)}).
          </p>
          {answer.warnings.length ? (
            <ul className="list-disc pl-5 text-micro text-flare-900">
              {answer.warnings.map((w) => (
                <li key={w}>{w}</li>
              ))}
            </ul>
          ) : null}
          <div className="flex gap-2">
            <Button
              size="sm"
              disabled={answer.pixels.length === 0}
              onClick={() => {
                const seen = new Set(calibration.bad_pixels.map(([x, y]) => `${x},${y}`));
                onAccept({
                  bad_pixels: [...calibration.bad_pixels, ...answer.pixels.filter(([x, y]) => !seen.has(`${x},${y}`))],
                });
                setAnswer(null);
              }}
            >
              Exclude them
            </Button>
            <Button size="sm" variant="ghost" onClick={() => setAnswer(null)}>
              Discard
            </Button>
          </div>
        </div>
      ) : null}
    </Panel>
  );
}
