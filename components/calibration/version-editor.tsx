'use client';
// The edit form of a calibration or settings version. The object is checked with the same zod schema as the server
// (parseCalibration / parseSettings) before it is sent; the server checks it again.
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { type ReactNode, useState } from 'react';
import { Button } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { type ApiError, apiFetch } from '@/lib/api/client';
import type { VersionDto, VersionKind } from '@/lib/db/queries/calibrations';
import { problemForUser } from '@/lib/field-labels';
import { parseAnyCalibration, parseSettings } from '@/reduction/formats';
import { calibrationToForm, type FormState, formToCalibration, formToSettings, settingsToForm } from './version-forms';

// The control comes in as `children`, inside the label, so the label is associated with it.
function Row({ label, hint, children }: { label: string; hint?: string; children: ReactNode }) {
  return (
    // biome-ignore lint/a11y/noLabelWithoutControl: the control is passed as children and rendered inside the label
    <label className="block text-small">
      <span className="font-medium text-ink-800">{label}</span>
      {hint ? <span className="ml-1 text-micro text-ink-500">{hint}</span> : null}
      <div className="mt-1">{children}</div>
    </label>
  );
}

export function VersionEditor({
  campaignId,
  kind,
  base,
  mode,
  onDone,
}: {
  campaignId: number;
  kind: VersionKind;
  /** The version the edit starts from (null: a first version). */
  base: VersionDto | null;
  /** `new`: save as the next version; `draft`: change this draft in place. */
  mode: 'new' | 'draft';
  onDone: () => void;
}) {
  const qc = useQueryClient();
  const baseBody = (base?.body ?? null) as Record<string, unknown> | null;
  const [f, setF] = useState<FormState>(() =>
    kind === 'calibration' ? calibrationToForm(baseBody) : settingsToForm(baseBody),
  );
  const [note, setNote] = useState(mode === 'draft' ? (base?.note ?? '') : '');
  const [problems, setProblems] = useState<string[]>([]);
  const set = (k: string) => (e: React.ChangeEvent<HTMLInputElement | HTMLSelectElement | HTMLTextAreaElement>) =>
    setF((s) => ({
      ...s,
      [k]: e.target.type === 'checkbox' ? (e.target as HTMLInputElement).checked : e.target.value,
    }));
  const text = (k: string, props: React.InputHTMLAttributes<HTMLInputElement> = {}) => (
    <input className={inputClass(false)} value={String(f[k] ?? '')} onChange={set(k)} inputMode="decimal" {...props} />
  );
  const m = useMutation({
    mutationFn: (body: unknown) =>
      mode === 'draft' && base
        ? apiFetch(`/api/campaigns/${campaignId}/${kind === 'calibration' ? 'calibrations' : 'settings'}/${base.id}`, {
            method: 'PATCH',
            json: { body, note },
          })
        : apiFetch(`/api/campaigns/${campaignId}/${kind === 'calibration' ? 'calibrations' : 'settings'}`, {
            method: 'POST',
            json: { body, note },
          }),
    onSuccess: () => {
      qc.invalidateQueries({ queryKey: ['versions', campaignId] });
      onDone();
    },
    onError: (err: ApiError) =>
      setProblems(err.details?.length ? err.details.map((d) => problemForUser(d, kind)) : [err.message]),
  });
  function save() {
    const body = kind === 'calibration' ? formToCalibration(f, baseBody) : formToSettings(f, baseBody);
    const r = kind === 'calibration' ? parseAnyCalibration(body) : parseSettings(body);
    if (!r.ok) {
      setProblems(r.problems.map((p) => problemForUser(p)));
      return;
    }
    setProblems([]);
    m.mutate(r.value);
  }
  const grid = 'grid gap-3 sm:grid-cols-2';
  return (
    <form
      className="space-y-4 rounded-md bg-ink-50 p-4 ring-1 ring-ink-100"
      data-testid={`${kind}-editor`}
      onSubmit={(e) => {
        e.preventDefault();
        save();
      }}
    >
      <p className="text-small font-semibold text-ink-800">
        {mode === 'draft'
          ? `Editing draft v${base?.version}`
          : base
            ? `New version based on v${base.version}`
            : 'First version'}
      </p>
      {kind === 'calibration' ? (
        <div className={grid}>
          <p className="text-micro text-ink-600 sm:col-span-2" data-testid="event-calibration-hint">
            For a campaign of event files (delay-line detectors) leave the centre and the momentum per pixel blank: the
            version then holds the spectrometer values below only.
          </p>
          <Row label="Centre x₀" hint="pixels (column)">
            {text('center_x')}
          </Row>
          <Row label="Centre y₀" hint="pixels (row)">
            {text('center_y')}
          </Row>
          <Row label="Momentum per pixel" hint="a.u. px⁻¹">
            {text('momentum_per_pixel_au')}
          </Row>
          <Row label="Rotation to the lab frame" hint="deg, counter-clockwise">
            {text('rotation_deg')}
          </Row>
          <Row label="Detector ellipticity ratio" hint="stretch along the axis">
            {text('ellipticity_ratio')}
          </Row>
          <Row label="Ellipticity axis" hint="deg">
            {text('ellipticity_axis_deg')}
          </Row>
          <label className="flex items-center gap-2 text-small text-ink-800">
            <input type="checkbox" checked={!!f.mirror} onChange={set('mirror')} /> Mirrored image (flips helicity and
            offset sign)
          </label>
          <label className="flex items-center gap-2 text-small text-ink-800">
            <input type="checkbox" checked={!!f.background_subtract} onChange={set('background_subtract')} /> Subtract
            the background frames
          </label>
          <Row label="Background scaling">
            <select
              className={inputClass(false)}
              value={String(f.background_scale_by)}
              onChange={set('background_scale_by')}
            >
              <option value="shots">by laser shots</option>
              <option value="none">none</option>
            </select>
          </Row>
          <Row label="Bad pixels" hint="one “x, y” per line">
            <textarea
              className={`${inputClass(false)} h-20 font-mono`}
              value={String(f.bad_pixels)}
              onChange={set('bad_pixels')}
            />
          </Row>
          <p className="text-micro font-semibold text-ink-700 sm:col-span-2">
            Spectrometer, for event files only — a blank field keeps the value stored in each file
          </p>
          <Row label="Acceleration length L" hint="m">
            {text('sp_acceleration_length')}
          </Row>
          <Row label="Drift length D" hint="m (0 without a drift)">
            {text('sp_drift_length')}
          </Row>
          <Row label="Spectrometer electric field" hint="V/m">
            {text('sp_electric_field')}
          </Row>
          <Row label="Magnetic field along the axis" hint="T">
            {text('sp_magnetic_field')}
          </Row>
          <Row label="Time offset t₀" hint="ns">
            {text('sp_t0')}
          </Row>
          <Row label="Detector centre x, y" hint="mm (p⊥ = 0 impact point)">
            <span className="flex gap-2">
              {text('sp_center_x', { 'aria-label': 'Detector centre x (mm)' })}
              {text('sp_center_y', { 'aria-label': 'Detector centre y (mm)' })}
            </span>
          </Row>
          {baseBody && 'flat_field' in baseBody ? (
            <p className="text-micro text-ink-500 sm:col-span-2">
              The flat-field gain map of v{base?.version} is kept unchanged.
            </p>
          ) : null}
        </div>
      ) : (
        <div className={grid}>
          <Row label="Momentum grid half-width" hint="p_max, a.u.">
            {text('p_max_au')}
          </Row>
          <Row label="Grid cells per side">{text('grid_n', { inputMode: 'numeric' })}</Row>
          <label className="flex items-center gap-2 text-small text-ink-800 sm:col-span-2">
            <input type="checkbox" checked={!!f.window_auto} onChange={set('window_auto')} /> Radial window found
            automatically
          </label>
          {!f.window_auto ? (
            <>
              <Row label="Radial window from" hint="a.u.">
                {text('window_min')}
              </Row>
              <Row label="Radial window to" hint="a.u.">
                {text('window_max')}
              </Row>
            </>
          ) : null}
          <Row label="Angular bins">{text('angular_bins', { inputMode: 'numeric' })}</Row>
          <Row label="Radial bins">{text('radial_bins', { inputMode: 'numeric' })}</Row>
          <Row label="Lobes" hint="“auto” or a number">
            {text('lobes')}
          </Row>
          <Row label="Angular smoothing" hint="deg (Gaussian σ)">
            {text('angular_smoothing_deg')}
          </Row>
          <Row label="Peak model">
            <select className={inputClass(false)} value={String(f.peak_model)} onChange={set('peak_model')}>
              <option value="follow">von Mises + constant, following the data</option>
              <option value="gaussian">Gaussian + constant</option>
              <option value="von_mises">von Mises + constant</option>
              <option value="parabola">parabola at the maximum</option>
            </select>
          </Row>
          <Row label="Fit window">
            <select
              className={inputClass(false)}
              value={String(f.fit_window_rule)}
              onChange={set('fit_window_rule')}
              data-testid="fit-window-rule"
            >
              <option value="follow">±3σ of each lobe, clipped at its neighbours</option>
              <option value="fixed">fixed half-width</option>
            </select>
          </Row>
          {f.fit_window_rule === 'fixed' ? (
            <Row label="Fit half-width" hint="deg">
              {text('fit_half_width_deg')}
            </Row>
          ) : null}
          <Row label="Bootstrap resamples">{text('bootstrap_resamples', { inputMode: 'numeric' })}</Row>
          <Row label="Bootstrap seed">{text('bootstrap_seed', { inputMode: 'numeric' })}</Row>
          <Row label="Phase maps: minimum counts per cell">{text('phase_min_counts')}</Row>
          <Row label="Phase maps: harmonics">{text('phase_harmonics', { inputMode: 'numeric' })}</Row>
          <p className="text-micro font-semibold text-ink-700 sm:col-span-2">Event files only</p>
          <Row label="Laser direction" hint="in the detector frame (x, y, s)">
            <select className={inputClass(false)} value={String(f.ev_laser_axis)} onChange={set('ev_laser_axis')}>
              {['+y', '-y', '+x', '-x', '+s', '-s'].map((a) => (
                <option key={a} value={a}>
                  {a}
                </option>
              ))}
            </select>
          </Row>
          <Row label="Events read at a time">{text('ev_chunk', { inputMode: 'numeric' })}</Row>
          <label className="flex items-center gap-2 text-small text-ink-800 sm:col-span-2">
            <input type="checkbox" checked={!!f.ev_gate} onChange={set('ev_gate')} /> Gate the momentum along the laser
          </label>
          {f.ev_gate ? (
            <>
              <Row label="Gate from" hint="a.u.">
                {text('ev_gate_lo')}
              </Row>
              <Row label="Gate to" hint="a.u.">
                {text('ev_gate_hi')}
              </Row>
            </>
          ) : null}
        </div>
      )}
      <Row label="Note" hint="why this version (kept with it)">
        <input className={inputClass(false)} value={note} onChange={(e) => setNote(e.target.value)} maxLength={2000} />
      </Row>
      {problems.length ? (
        <ul
          role="alert"
          className="list-disc space-y-0.5 rounded border border-fault-100 bg-fault-50 py-2 pr-3 pl-7 text-small text-fault-700"
          data-testid="version-problems"
        >
          {problems.map((p) => (
            <li key={p}>{p}</li>
          ))}
        </ul>
      ) : null}
      <div className="flex gap-2">
        <Button type="submit" size="sm" disabled={m.isPending}>
          {m.isPending ? 'Saving…' : mode === 'draft' ? 'Save draft' : 'Save as new version'}
        </Button>
        <Button type="button" size="sm" variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
