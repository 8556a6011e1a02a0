'use client';
// The citation page of a campaign (C10): the metadata a DataCite record and a schema.org Dataset need, edited by the
// team's PI or a data steward, with its completeness and the three record downloads. Everyone else of the team
// reads it. The server parses every field (lib/citation/schema.ts); its messages are shown beside the fields.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { type FormEvent, useEffect, useState } from 'react';
import { Badge, Button, ErrorState, Field, inputClass, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { ApiError, apiFetch, detailsByField } from '@/lib/api/client';
import type { CitationBody } from '@/lib/citation/schema';
import { FUNDER_IDENTIFIER_TYPES, RELATED_IDENTIFIER_TYPES, RELATION_TYPES } from '@/lib/citation/vocabulary';
import type { CitationDto } from '@/lib/db/queries/citations';
import { formatDateTime } from '@/lib/format';
import { CampaignRetentionPanel } from './campaign-retention';
import { LandingPanel } from './landing-panel';

type CitationResponse = CitationDto & { can: { edit: boolean; retention: boolean } };

// FORM STATE (strings while typing; the server turns them into the schema's values) //

interface CreatorRow {
  nameType: 'Personal' | 'Organizational';
  givenName: string;
  familyName: string;
  organisationName: string;
  orcid: string;
  affiliations: string;
}
interface FundingRow {
  funderName: string;
  funderIdentifier: string;
  funderIdentifierType: string;
  awardNumber: string;
  awardTitle: string;
}
interface RelatedRow {
  identifier: string;
  identifierType: string;
  relationType: string;
}
interface FormState {
  title: string;
  publisher: string;
  publicationYear: string;
  doi: string;
  version: string;
  licence: string;
  description: string;
  keywords: string;
  creators: CreatorRow[];
  funding: FundingRow[];
  relatedIdentifiers: RelatedRow[];
}

const COMMON_LICENCES = ['CC-BY-4.0', 'CC0-1.0', 'CC-BY-SA-4.0', 'CC-BY-NC-4.0', 'ODbL-1.0', 'PDDL-1.0'];
const emptyCreator = (): CreatorRow => ({
  nameType: 'Personal',
  givenName: '',
  familyName: '',
  organisationName: '',
  orcid: '',
  affiliations: '',
});
const emptyFunding = (): FundingRow => ({
  funderName: '',
  funderIdentifier: '',
  funderIdentifierType: '',
  awardNumber: '',
  awardTitle: '',
});
const emptyRelated = (): RelatedRow => ({ identifier: '', identifierType: 'DOI', relationType: 'IsSupplementTo' });

function toForm(c: CitationBody): FormState {
  return {
    title: c.title ?? '',
    publisher: c.publisher ?? '',
    publicationYear: c.publicationYear === null ? '' : String(c.publicationYear),
    doi: c.doi ?? '',
    version: c.version ?? '',
    licence: c.licence ?? '',
    description: c.description ?? '',
    keywords: c.keywords.join(', '),
    creators: c.creators.map((p) => ({
      nameType: p.nameType,
      givenName: p.givenName ?? '',
      familyName: p.familyName ?? '',
      organisationName: p.organisationName ?? '',
      orcid: p.orcid ?? '',
      affiliations: p.affiliations.map((a) => a.name).join('; '),
    })),
    funding: c.funding.map((f) => ({
      funderName: f.funderName,
      funderIdentifier: f.funderIdentifier ?? '',
      funderIdentifierType: f.funderIdentifierType ?? '',
      awardNumber: f.awardNumber ?? '',
      awardTitle: f.awardTitle ?? '',
    })),
    relatedIdentifiers: c.relatedIdentifiers.map((r) => ({ ...r })),
  };
}

const orNull = (s: string) => (s.trim() === '' ? null : s.trim());

function toBody(f: FormState, previous: CitationBody): unknown {
  return {
    title: orNull(f.title),
    publisher: orNull(f.publisher),
    publicationYear: orNull(f.publicationYear),
    doi: orNull(f.doi),
    version: orNull(f.version),
    licence: orNull(f.licence),
    description: orNull(f.description),
    keywords: f.keywords
      .split(',')
      .map((k) => k.trim())
      .filter(Boolean),
    creators: f.creators.map((p, i) => {
      const names = p.affiliations
        .split(';')
        .map((a) => a.trim())
        .filter(Boolean);
      const before = previous.creators[i]?.affiliations ?? [];
      return {
        nameType: p.nameType,
        givenName: orNull(p.givenName),
        familyName: orNull(p.familyName),
        organisationName: orNull(p.organisationName),
        orcid: orNull(p.orcid),
        // a ROR identifier entered earlier (by the API) stays with its affiliation when the name is unchanged
        affiliations: names.map((name) => ({ name, rorId: before.find((a) => a.name === name)?.rorId ?? null })),
      };
    }),
    funding: f.funding.map((x) => ({
      funderName: x.funderName.trim(),
      funderIdentifier: orNull(x.funderIdentifier),
      funderIdentifierType: orNull(x.funderIdentifierType),
      awardNumber: orNull(x.awardNumber),
      awardTitle: orNull(x.awardTitle),
    })),
    relatedIdentifiers: f.relatedIdentifiers.map((r) => ({ ...r, identifier: r.identifier.trim() })),
  };
}

// VIEW //

export function CitationEditor({ campaignId }: { campaignId: number }) {
  const qc = useQueryClient();
  const key = ['campaign', campaignId, 'citation'];
  const q = useQuery({
    queryKey: key,
    queryFn: () => apiFetch<CitationResponse>(`/api/campaigns/${campaignId}/citation`),
  });
  const [form, setForm] = useState<FormState | null>(null);
  const [saved, setSaved] = useState(false);
  useEffect(() => {
    if (q.data && form === null) setForm(toForm(q.data.citation));
  }, [q.data, form]);
  const save = useMutation({
    mutationFn: (body: unknown) =>
      apiFetch<CitationResponse>(`/api/campaigns/${campaignId}/citation`, { method: 'PUT', json: body }),
    onSuccess: (data) => {
      qc.setQueryData(key, data);
      setForm(toForm(data.citation));
      setSaved(true);
    },
  });
  if (q.isPending || (q.data && !form)) return <LoadingBlock lines={10} />;
  if (q.isError) return <ErrorState message={q.error.message} onRetry={() => q.refetch()} />;
  const data = q.data;
  const f = form as FormState;
  const editable = data.can.edit;
  const errors = detailsByField(save.error);
  const err = (path: string) => errors[path] ?? null;
  const set = (patch: Partial<FormState>) => {
    setSaved(false);
    setForm({ ...f, ...patch });
  };
  const onSubmit = (e: FormEvent) => {
    e.preventDefault();
    save.mutate(toBody(f, data.citation));
  };
  const comp = data.completeness;
  const embargo = data.campaign.embargoUntil && data.campaign.embargoUntil > new Date().toISOString().slice(0, 10);
  const dataciteReady = comp.requiredMissing.filter((m) => m !== 'licence' && m !== 'description').length === 0;
  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow={`${data.campaign.teamName} · ${data.campaign.name}`}
        title="Citation record"
        description="What others need to cite this campaign's data: who made it, under which licence, where it is described. Lobeline writes the DataCite and schema.org records from it."
        actions={
          <Link href={`/campaigns/${campaignId}`} className="text-small font-medium text-lobe-700 hover:underline">
            Back to the campaign
          </Link>
        }
      />
      <div className="grid gap-6 lg:grid-cols-3">
        <form onSubmit={onSubmit} className="space-y-6 lg:col-span-2" aria-label="Citation metadata" noValidate>
          <fieldset disabled={!editable} className="space-y-6">
            <Panel title="The dataset">
              <div className="grid gap-4 sm:grid-cols-2">
                <Field
                  className="sm:col-span-2"
                  label="Title"
                  value={f.title}
                  placeholder={data.campaign.name}
                  hint="Leave empty to use the campaign's name."
                  error={err('title')}
                  onChange={(e) => set({ title: e.target.value })}
                />
                <Field
                  label="DOI"
                  value={f.doi}
                  placeholder="10.1234/abcd"
                  hint="Registered by your data centre; the https://doi.org/ prefix is fine."
                  error={err('doi')}
                  onChange={(e) => set({ doi: e.target.value })}
                />
                <Field
                  label="Version"
                  value={f.version}
                  placeholder="1.0"
                  error={err('version')}
                  onChange={(e) => set({ version: e.target.value })}
                />
                <Field
                  label="Publisher"
                  value={f.publisher}
                  placeholder="The facility or repository that makes the data available"
                  error={err('publisher')}
                  onChange={(e) => set({ publisher: e.target.value })}
                />
                <Field
                  label="Publication year"
                  inputMode="numeric"
                  value={f.publicationYear}
                  placeholder={String(new Date().getFullYear())}
                  error={err('publicationYear')}
                  onChange={(e) => set({ publicationYear: e.target.value })}
                />
                <Field
                  label="Licence (SPDX identifier)"
                  value={f.licence}
                  list="spdx-common"
                  placeholder="CC-BY-4.0"
                  hint="The short identifier from the SPDX License List; spelling and case matter."
                  error={err('licence')}
                  onChange={(e) => set({ licence: e.target.value })}
                />
                <datalist id="spdx-common">
                  {COMMON_LICENCES.map((l) => (
                    <option key={l} value={l} />
                  ))}
                </datalist>
                <Field
                  label="Keywords"
                  value={f.keywords}
                  placeholder="attoclock, strong-field ionization"
                  hint="Separated by commas."
                  error={err('keywords') ?? Object.entries(errors).find(([k]) => k.startsWith('keywords.'))?.[1]}
                  onChange={(e) => set({ keywords: e.target.value })}
                />
                <Field className="sm:col-span-2" label="Description" error={err('description')}>
                  {({ id, describedBy, invalid }) => (
                    <textarea
                      id={id}
                      rows={4}
                      aria-describedby={describedBy}
                      aria-invalid={invalid || undefined}
                      className={inputClass(invalid)}
                      value={f.description}
                      placeholder="What was measured, how, and what the files contain."
                      onChange={(e) => set({ description: e.target.value })}
                    />
                  )}
                </Field>
              </div>
            </Panel>

            <Panel
              title="Creators"
              description="People and groups to be credited, in citation order. ORCID iDs are checked against their check digit."
              actions={
                editable ? (
                  <Button
                    size="sm"
                    variant="secondary"
                    onClick={() => set({ creators: [...f.creators, emptyCreator()] })}
                  >
                    Add a creator
                  </Button>
                ) : null
              }
            >
              {f.creators.length === 0 ? <p className="text-small text-ink-500">No creators yet.</p> : null}
              <ol className="space-y-4">
                {f.creators.map((p, i) => {
                  const upd = (patch: Partial<CreatorRow>) =>
                    set({ creators: f.creators.map((x, j) => (j === i ? { ...x, ...patch } : x)) });
                  return (
                    // biome-ignore lint/suspicious/noArrayIndexKey: rows have no identity of their own
                    <li key={i} className="rounded-md bg-ink-50 p-3 ring-1 ring-ink-100" data-testid="creator-row">
                      <div className="grid gap-3 sm:grid-cols-3">
                        <Field label="Kind">
                          {({ id }) => (
                            <select
                              id={id}
                              className={inputClass()}
                              value={p.nameType}
                              onChange={(e) => upd({ nameType: e.target.value as CreatorRow['nameType'] })}
                            >
                              <option value="Personal">Person</option>
                              <option value="Organizational">Group or organisation</option>
                            </select>
                          )}
                        </Field>
                        {p.nameType === 'Personal' ? (
                          <>
                            <Field
                              label="Given name"
                              value={p.givenName}
                              error={err(`creators.${i}.givenName`)}
                              onChange={(e) => upd({ givenName: e.target.value })}
                            />
                            <Field
                              label="Family name"
                              value={p.familyName}
                              error={err(`creators.${i}.familyName`)}
                              onChange={(e) => upd({ familyName: e.target.value })}
                            />
                            <Field
                              label="ORCID iD"
                              value={p.orcid}
                              placeholder="0000-0000-0000-0000"
                              error={err(`creators.${i}.orcid`)}
                              onChange={(e) => upd({ orcid: e.target.value })}
                            />
                          </>
                        ) : (
                          <Field
                            className="sm:col-span-2"
                            label="Name of the group"
                            value={p.organisationName}
                            error={err(`creators.${i}.organisationName`)}
                            onChange={(e) => upd({ organisationName: e.target.value })}
                          />
                        )}
                        <Field
                          className={p.nameType === 'Personal' ? 'sm:col-span-2' : 'sm:col-span-3'}
                          label="Affiliations"
                          value={p.affiliations}
                          hint="Separated by semicolons."
                          error={
                            Object.entries(errors).find(([k]) => k.startsWith(`creators.${i}.affiliations`))?.[1] ??
                            null
                          }
                          onChange={(e) => upd({ affiliations: e.target.value })}
                        />
                      </div>
                      {editable ? (
                        <Button
                          size="sm"
                          variant="ghost"
                          className="mt-2"
                          onClick={() => set({ creators: f.creators.filter((_, j) => j !== i) })}
                        >
                          Remove
                        </Button>
                      ) : null}
                    </li>
                  );
                })}
              </ol>
            </Panel>

            <Panel
              title="Funding"
              actions={
                editable ? (
                  <Button
                    size="sm"
                    variant="secondary"
                    onClick={() => set({ funding: [...f.funding, emptyFunding()] })}
                  >
                    Add funding
                  </Button>
                ) : null
              }
            >
              {f.funding.length === 0 ? <p className="text-small text-ink-500">No funding listed.</p> : null}
              <ol className="space-y-4">
                {f.funding.map((x, i) => {
                  const upd = (patch: Partial<FundingRow>) =>
                    set({ funding: f.funding.map((y, j) => (j === i ? { ...y, ...patch } : y)) });
                  return (
                    // biome-ignore lint/suspicious/noArrayIndexKey: rows have no identity of their own
                    <li key={i} className="grid gap-3 rounded-md bg-ink-50 p-3 ring-1 ring-ink-100 sm:grid-cols-2">
                      <Field
                        label="Funder"
                        value={x.funderName}
                        error={err(`funding.${i}.funderName`)}
                        onChange={(e) => upd({ funderName: e.target.value })}
                      />
                      <Field
                        label="Award number"
                        value={x.awardNumber}
                        error={err(`funding.${i}.awardNumber`)}
                        onChange={(e) => upd({ awardNumber: e.target.value })}
                      />
                      <Field
                        label="Funder identifier"
                        value={x.funderIdentifier}
                        placeholder="https://ror.org/…"
                        error={err(`funding.${i}.funderIdentifier`)}
                        onChange={(e) => upd({ funderIdentifier: e.target.value })}
                      />
                      <Field label="Kind of funder identifier" error={err(`funding.${i}.funderIdentifierType`)}>
                        {({ id }) => (
                          <select
                            id={id}
                            className={inputClass()}
                            value={x.funderIdentifierType}
                            onChange={(e) => upd({ funderIdentifierType: e.target.value })}
                          >
                            <option value="">—</option>
                            {FUNDER_IDENTIFIER_TYPES.map((t) => (
                              <option key={t} value={t}>
                                {t}
                              </option>
                            ))}
                          </select>
                        )}
                      </Field>
                      <Field
                        className="sm:col-span-2"
                        label="Award title"
                        value={x.awardTitle}
                        onChange={(e) => upd({ awardTitle: e.target.value })}
                      />
                      {editable ? (
                        <Button
                          size="sm"
                          variant="ghost"
                          className="justify-self-start"
                          onClick={() => set({ funding: f.funding.filter((_, j) => j !== i) })}
                        >
                          Remove
                        </Button>
                      ) : null}
                    </li>
                  );
                })}
              </ol>
            </Panel>

            <Panel
              title="Related identifiers"
              description="The paper these data support (IsSupplementTo), the raw-data record they come from (IsDerivedFrom), and the like."
              actions={
                editable ? (
                  <Button
                    size="sm"
                    variant="secondary"
                    onClick={() => set({ relatedIdentifiers: [...f.relatedIdentifiers, emptyRelated()] })}
                  >
                    Add an identifier
                  </Button>
                ) : null
              }
            >
              {f.relatedIdentifiers.length === 0 ? <p className="text-small text-ink-500">None yet.</p> : null}
              <ol className="space-y-3">
                {f.relatedIdentifiers.map((r, i) => {
                  const upd = (patch: Partial<RelatedRow>) =>
                    set({
                      relatedIdentifiers: f.relatedIdentifiers.map((y, j) => (j === i ? { ...y, ...patch } : y)),
                    });
                  return (
                    // biome-ignore lint/suspicious/noArrayIndexKey: rows have no identity of their own
                    <li key={i} className="grid gap-3 rounded-md bg-ink-50 p-3 ring-1 ring-ink-100 sm:grid-cols-3">
                      <Field label="Relation">
                        {({ id }) => (
                          <select
                            id={id}
                            className={inputClass()}
                            value={r.relationType}
                            onChange={(e) => upd({ relationType: e.target.value })}
                          >
                            {RELATION_TYPES.map((t) => (
                              <option key={t} value={t}>
                                {t}
                              </option>
                            ))}
                          </select>
                        )}
                      </Field>
                      <Field label="Kind">
                        {({ id }) => (
                          <select
                            id={id}
                            className={inputClass()}
                            value={r.identifierType}
                            onChange={(e) => upd({ identifierType: e.target.value })}
                          >
                            {RELATED_IDENTIFIER_TYPES.map((t) => (
                              <option key={t} value={t}>
                                {t}
                              </option>
                            ))}
                          </select>
                        )}
                      </Field>
                      <Field
                        label="Identifier"
                        value={r.identifier}
                        error={err(`relatedIdentifiers.${i}.identifier`)}
                        onChange={(e) => upd({ identifier: e.target.value })}
                      />
                      {editable ? (
                        <Button
                          size="sm"
                          variant="ghost"
                          className="justify-self-start"
                          onClick={() => set({ relatedIdentifiers: f.relatedIdentifiers.filter((_, j) => j !== i) })}
                        >
                          Remove
                        </Button>
                      ) : null}
                    </li>
                  );
                })}
              </ol>
            </Panel>
          </fieldset>
          {editable ? (
            <div className="flex flex-wrap items-center gap-3">
              <Button type="submit" isLoading={save.isPending}>
                Save citation metadata
              </Button>
              {saved ? (
                <span role="status" className="text-small text-lobe-700">
                  Saved.
                </span>
              ) : null}
              {save.error ? (
                <p role="alert" className="text-small text-fault-600">
                  {save.error instanceof ApiError && save.error.details.length
                    ? `Not saved: ${save.error.details.length} value${save.error.details.length === 1 ? '' : 's'} need a look (marked above). Nothing you typed was lost.`
                    : save.error.message}
                </p>
              ) : null}
            </div>
          ) : (
            <p className="text-small text-ink-500">
              The team's PI and the data stewards edit this page; you can read it and download the records.
            </p>
          )}
        </form>

        <div className="space-y-6">
          <Panel title="Completeness" data-testid="citation-completeness">
            <p className="text-display font-semibold text-ink-900">{Math.round(comp.score * 100)} %</p>
            <p className="text-small text-ink-500">
              of the required and recommended items ({comp.items.filter((i) => i.present).length} of {comp.items.length}
              ).
            </p>
            {comp.requiredMissing.length ? (
              <div className="mt-3">
                <p className="text-small font-medium text-ink-800">Still needed</p>
                <ul className="mt-1 flex flex-wrap gap-1.5">
                  {comp.requiredMissing.map((m) => (
                    <li key={m}>
                      <Badge tone="bad">{m}</Badge>
                    </li>
                  ))}
                </ul>
              </div>
            ) : null}
            {comp.recommendedMissing.length ? (
              <div className="mt-3">
                <p className="text-small font-medium text-ink-800">Recommended</p>
                <ul className="mt-1 flex flex-wrap gap-1.5">
                  {comp.recommendedMissing.map((m) => (
                    <li key={m}>
                      <Badge tone="warn">{m}</Badge>
                    </li>
                  ))}
                </ul>
              </div>
            ) : null}
            {comp.requiredMissing.length + comp.recommendedMissing.length === 0 ? (
              <p className="mt-3">
                <Badge tone="good">Everything a citation needs is here</Badge>
              </p>
            ) : null}
            {data.updatedAt ? (
              <p className="mt-3 text-micro text-ink-500">
                Last changed {formatDateTime(data.updatedAt)}
                {data.updatedBy ? ` by ${data.updatedBy}` : ''}.
              </p>
            ) : null}
          </Panel>
          <CampaignRetentionPanel campaignId={campaignId} value={data.campaign} editable={data.can.retention} />
          <LandingPanel campaignId={campaignId} underEmbargo={!!embargo} />
          <Panel title="Records">
            {embargo ? (
              <p className="mb-3 rounded-md bg-flare-50 px-3 py-2 text-small text-flare-800 ring-1 ring-flare-200">
                Under embargo until {data.campaign.embargoUntil}. Until that day the records and the public page name
                the dataset but not its files (count, size, format), and say the day the files open.
              </p>
            ) : null}
            <ul className="space-y-2 text-small">
              <li>
                {dataciteReady ? (
                  <a
                    className="font-medium text-lobe-700 hover:underline"
                    href={`/api/campaigns/${campaignId}/citation/record?format=datacite-xml&download=1`}
                    download
                  >
                    DataCite XML
                  </a>
                ) : (
                  <span className="text-ink-500">DataCite XML</span>
                )}
              </li>
              <li>
                {dataciteReady ? (
                  <a
                    className="font-medium text-lobe-700 hover:underline"
                    href={`/api/campaigns/${campaignId}/citation/record?format=datacite-json&download=1`}
                    download
                  >
                    DataCite JSON
                  </a>
                ) : (
                  <span className="text-ink-500">DataCite JSON</span>
                )}
              </li>
              <li>
                <a
                  className="font-medium text-lobe-700 hover:underline"
                  href={`/api/campaigns/${campaignId}/citation/record?format=schema-org&download=1`}
                  download
                >
                  schema.org Dataset (JSON-LD)
                </a>
              </li>
            </ul>
            {!dataciteReady ? (
              <p className="mt-3 text-small text-ink-500">
                A DataCite record needs a DOI, a creator, a publisher and a publication year; save them first.
              </p>
            ) : null}
            <p className="mt-3 text-micro text-ink-500">
              {data.files.count} stored file{data.files.count === 1 ? '' : 's'} in this campaign.
            </p>
          </Panel>
        </div>
      </div>
    </div>
  );
}
