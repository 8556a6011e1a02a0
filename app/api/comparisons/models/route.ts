// GET /api/comparisons/models?target=He&wavelengthNm=800&ellipticity=0.87&intensities=…&models=…: model overlays
// of the comparison page (SCIENCE.md §4.2, §10.3–10.6) at the given cycle-averaged total intensities. The numbers
// come from physics alone, but they are part of reading results, so the caller must be allowed to read results in
// at least one team (lib/policy.ts).
import { apiRoute } from '@/lib/api/route';
import { modelCurve } from '@/lib/comparison/models';
import { MODEL_NAMES, modelsQuerySchema } from '@/lib/comparison/spec';
import { authorize } from '@/lib/policy';

export const GET = apiRoute({ query: modelsQuerySchema }, async ({ actor, query }) => {
  authorize(actor, 'result.view');
  const models = query.models.length ? query.models : [...MODEL_NAMES];
  return {
    target: query.target,
    wavelengthNm: query.wavelengthNm,
    ellipticity: query.ellipticity,
    intensityConvention: 'cycle_averaged_total',
    curves: models.map((model) =>
      modelCurve({
        model,
        target: query.target,
        wavelengthNm: query.wavelengthNm,
        ellipticity: query.ellipticity,
        intensitiesWcm2: query.intensities,
      }),
    ),
  };
});
