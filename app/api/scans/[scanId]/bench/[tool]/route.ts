// POST /api/scans/[scanId]/bench/[tool]: runs one calibration-bench fitting tool (reduction/bench/, issue 15) on
// the full-resolution raw frame of one step, server-side; nothing is stored. Tools: centre (symmetry of the kind),
// ring, ellipse, ati_scale, background_scale, hot_pixels, rotation. Analysts and the team's PI ('bench.use').
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { readBenchFrame } from '@/lib/bench/raw-frame';
import { AppError } from '@/lib/errors';
import { atiRingRadii, fitAtiScale } from '@/reduction/bench/ati-scale';
import { fitBackgroundScale } from '@/reduction/bench/background-scale';
import { findCentreBySymmetry, SYMMETRY_REASONS, symmetryForKind } from '@/reduction/bench/centre-symmetry';
import { fitDetectorEllipse } from '@/reduction/bench/ellipse-fit';
import { findHotPixels } from '@/reduction/bench/hot-pixels';
import { fitRing } from '@/reduction/bench/ring-fit';
import { fitRotationFromReference } from '@/reduction/bench/rotation';
import type { BenchFrame } from '@/reduction/bench/types';
import { photonEnergyEv } from '@/reduction/constants';
import { scanFor } from '../../access';

const TOOLS = ['centre', 'ring', 'ellipse', 'ati_scale', 'background_scale', 'hot_pixels', 'rotation'] as const;
const params = z.object({ scanId: idParam, tool: z.enum(TOOLS, `one of ${TOOLS.join(', ')}`) });

const px = z.number().finite().min(-1e5).max(1e5);
const point = z.tuple([px, px]);
const radius = z.number().finite().min(0).max(1e5);
const calibration = z
  .object({
    momentum_per_pixel_au: z.number().finite().positive(),
    rotation_deg: z.number().finite().default(0),
    mirror: z.boolean().default(false),
    detector_ellipticity: z
      .object({ ratio: z.number().finite().positive(), axis_deg: z.number().finite() })
      .default({ ratio: 1, axis_deg: 0 }),
  })
  .strict();
const annulus = z
  .object({ centrePx: point, rMinPx: radius, rMaxPx: radius })
  .strict()
  .refine((a) => a.rMaxPx > a.rMinPx, 'rMaxPx must exceed rMinPx');

const body = z
  .object({
    step: z.number().int().min(0).max(4095).default(0),
    calibration: calibration.optional(),
    /** centre: start of the search; rotation, ati_scale: the centre to use. */
    centrePx: point.optional(),
    annulus: annulus.optional(),
    rMinPx: radius.optional(),
    rMaxPx: radius.optional(),
    /** rotation: lab azimuth of the reference's polarization axis. */
    labAxisDeg: z.number().finite().min(-360).max(360).optional(),
    /** ati_scale: ring radius guesses (px), the order of the first ring and the half window. */
    guessesPx: z.array(radius).min(2).max(64).optional(),
    firstOrder: z.number().int().min(0).max(1000).optional(),
    halfWidthPx: z.number().finite().positive().max(1000).optional(),
    /** background_scale: rectangles [x0, y0, x1, y1] (px, inclusive) outside the lobes. */
    regions: z
      .array(z.tuple([px, px, px, px]))
      .min(1)
      .max(32)
      .optional(),
    /** hot_pixels */
    alpha: z.number().gt(0).lt(1).optional(),
    minExcess: z.number().min(0).max(1e9).optional(),
  })
  .strict();

function need<T>(v: T | undefined, name: string, tool: string): T {
  if (v === undefined)
    throw new AppError('bad_request:api', {
      message: `The ${tool} tool needs ${name}.`,
      details: [`${name} is required`],
    });
  return v;
}

export const POST = apiRoute({ params, body }, async ({ actor, params: p, body: b }) => {
  // access first (404/403 before any file is read)
  await scanFor(actor, p.scanId, 'bench.use');
  const raw = await readBenchFrame({ scanId: p.scanId, step: b.step });
  const { meta } = raw;
  const f = {
    ...raw,
    nX: meta.shape.nX,
    nY: meta.shape.nY,
    shots: meta.shots[b.step] ?? null,
    backgroundShots: meta.background
      ? (meta.background.shots[meta.background.layout === 'single' ? 0 : b.step] ?? null)
      : null,
  };
  const frame: BenchFrame = { nX: f.nX, nY: f.nY, counts: f.counts };
  try {
    switch (p.tool) {
      case 'centre': {
        const symmetry = symmetryForKind(f.meta.experimentKind);
        if (!symmetry) {
          throw new AppError('bad_request:scan', { message: SYMMETRY_REASONS[f.meta.experimentKind] });
        }
        const r = findCentreBySymmetry(frame, {
          symmetry,
          kind: f.meta.experimentKind,
          calibration: b.calibration,
          axisDeg: f.meta.majorAxisAngleDeg,
          startPx: b.centrePx,
          rMinPx: b.rMinPx,
          rMaxPx: b.rMaxPx,
        });
        // the residual image stays on the server at full resolution; the page computes its own in the worker
        return { tool: p.tool, ...r, residual: { rms: r.residual.rms } };
      }
      case 'ring':
        return { tool: p.tool, ...fitRing({ frame, annulus: need(b.annulus, 'an annulus', 'ring') }) };
      case 'ellipse':
        return {
          tool: p.tool,
          ...fitDetectorEllipse(
            { frame, annulus: need(b.annulus, 'an annulus', 'ellipse') },
            { kind: f.meta.experimentKind, ellipticity: f.meta.ellipticity },
          ),
        };
      case 'ati_scale': {
        const radii = atiRingRadii(frame, {
          centrePx: need(b.centrePx, 'centrePx', 'ATI scale'),
          calibration: b.calibration,
          guessesPx: need(b.guessesPx, 'guessesPx', 'ATI scale'),
          halfWidthPx: b.halfWidthPx ?? 3,
        });
        const ok = radii.filter((r) => Number.isFinite(r.radiusPx));
        if (ok.length < 2) throw new AppError('bad_request:scan', { message: 'Fewer than two rings could be fitted.' });
        const orders = radii.flatMap((r, i) => (Number.isFinite(r.radiusPx) ? [(b.firstOrder ?? 0) + i] : []));
        const fit = fitAtiScale(
          ok.map((r) => r.radiusPx),
          ok.map((r) => r.radiusErrPx),
          photonEnergyEv(f.meta.wavelengthNm),
          { orders },
        );
        return { tool: p.tool, rings: radii, ...fit };
      }
      case 'background_scale': {
        if (!f.background) throw new AppError('bad_request:scan', { message: 'This scan has no background frame.' });
        const mask = new Uint8Array(f.nX * f.nY);
        for (const [x0, y0, x1, y1] of need(b.regions, 'regions', 'background scale')) {
          for (let y = Math.max(0, Math.ceil(Math.min(y0, y1))); y <= Math.min(f.nY - 1, Math.max(y0, y1)); y++) {
            for (let x = Math.max(0, Math.ceil(Math.min(x0, x1))); x <= Math.min(f.nX - 1, Math.max(x0, x1)); x++) {
              mask[y * f.nX + x] = 1;
            }
          }
        }
        const r = fitBackgroundScale(frame, { nX: f.nX, nY: f.nY, counts: f.background }, mask, {
          shotRatio: f.shots && f.backgroundShots ? f.shots / f.backgroundShots : undefined,
        });
        return { tool: p.tool, ...r, residual: { rms: r.residual.rms } };
      }
      case 'hot_pixels':
        return { tool: p.tool, ...findHotPixels(frame, { alpha: b.alpha, minExcess: b.minExcess }) };
      case 'rotation':
        return {
          tool: p.tool,
          ...fitRotationFromReference(frame, need(b.centrePx, 'centrePx', 'rotation'), {
            calibration: b.calibration,
            labAxisDeg: b.labAxisDeg ?? f.meta.majorAxisAngleDeg,
            rMinPx: b.rMinPx,
            rMaxPx: b.rMaxPx,
          }),
        };
    }
  } catch (err) {
    // the tools throw RangeError with a plain sentence for inputs they cannot use
    if (err instanceof RangeError)
      throw new AppError('bad_request:scan', { message: err.message, details: [err.message] });
    throw err;
  }
});
