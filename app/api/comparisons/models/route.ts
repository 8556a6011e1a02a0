// GET /api/comparisons/models?target=He&wavelengthNm=800&ellipticity=0.87&intensities=…&models=…: model overlays
// of the comparison page (SCIENCE.md §4.2, §10.3–10.7) at the given cycle-averaged total intensities, from the
// MariaDB cache (lib/comparison/model-cache.ts). The ensemble runs on the model queue: until it is done its curve
// says `queued` or `running` with the progress, and the page asks again. The numbers come from physics alone, but
// they are part of reading results, so the caller must be allowed to read results in at least one team
// (lib/policy.ts).
import { apiRoute } from '@/lib/api/route';
import { modelCurvesCached } from '@/lib/comparison/model-cache';
import { MODEL_NAMES, modelsQuerySchema } from '@/lib/comparison/spec';
import { authorize } from '@/lib/policy';

export const GET = apiRoute({ query: modelsQuerySchema }, async ({ actor, query }) => {
  authorize(actor, 'result.view');
  // without a choice: the fast models only (the ensemble is a queued run, started only when asked for)
  const models = query.models.length ? query.models : MODEL_NAMES.filter((m) => m !== 'ensemble');
  return {
    target: query.target,
    wavelengthNm: query.wavelengthNm,
    ellipticity: query.ellipticity,
    intensityConvention: 'cycle_averaged_total',
    curves: await modelCurvesCached(
      {
        target: query.target,
        wavelengthNm: query.wavelengthNm,
        ellipticity: query.ellipticity,
        intensitiesWcm2: query.intensities,
      },
      models,
    ),
  };
});
