// What each experiment kind's scan page shows (C6). Angular streaking measures the offset of the lobe(s) from the
// simple-man's direction, so the lobe markers, the simple-man direction, the lobe radius with the adiabatic intensity
// estimate from it and the offset figures apply. A counter-rotating bicircular ω + 2ω field has three-fold lobes with
// expected directions from its vector potential (SCIENCE.md field models), so the same lobe views apply, drawn per
// lobe. A two-colour ω–2ω phase scan is analysed per pixel against the relative phase (phase maps and drawn-region
// curves): it has no lobe, no simple-man direction, no offset and no intensity-from-radius; its image, angular
// distribution and spectra are shown plain. A single image shows whatever lobes its result has.
import type { ExperimentKind } from '@/reduction/formats';

export interface KindViews {
  /** Lobe maxima, simple-man directions and the lobe-radius ring over the momentum image. */
  lobeOverlays: boolean;
  /** The fitted peak model and lobe guides on the angular distribution. */
  lobeFits: boolean;
  /** Offset angle, transverse shift, lobe radius and the intensity estimated from it in headline and table. */
  lobeFigures: boolean;
  /** Phase maps and region curves. */
  phaseMaps: boolean;
}

const VIEWS: Record<ExperimentKind, KindViews> = {
  angular_streaking: { lobeOverlays: true, lobeFits: true, lobeFigures: true, phaseMaps: false },
  bicircular: { lobeOverlays: true, lobeFits: true, lobeFigures: true, phaseMaps: false },
  two_color_phase: { lobeOverlays: false, lobeFits: false, lobeFigures: false, phaseMaps: true },
  image: { lobeOverlays: true, lobeFits: true, lobeFigures: true, phaseMaps: false },
};

export function viewsFor(kind: string | null | undefined): KindViews {
  return VIEWS[(kind ?? '') as ExperimentKind] ?? VIEWS.image;
}
