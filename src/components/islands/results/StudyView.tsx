import { useEffect, useState } from 'react';
import type { StudyComparison } from '../../../lib/reporting/types';
import { COMPARISON_METHOD } from '../../../lib/reporting/methodText';
import { getStudyComparison } from '../../../lib/api-client/routes';
import { FractionsPlot } from './FractionsPlot';
import { ci, nm, pct, pValue } from './format';

const signedPct = (x: number | null) => (x === null ? '–' : `${x >= 0 ? '+' : '−'}${Math.abs(x * 100).toFixed(1)} %`);
const signedNm = (x: number | null) => (x === null ? '–' : `${x >= 0 ? '+' : '−'}${Math.abs(x).toFixed(1)} nm`);
const sd = (x: number | null) => (x === null ? '–' : x.toFixed(2));

/** Per-sample marker fractions by group, and the comparison of two chosen groups with the sample as the unit. */
export function StudyView({ initial }: { initial: StudyComparison }) {
  const [data, setData] = useState(initial);
  const [groupA, setGroupA] = useState(initial.groupA ?? initial.groups[0] ?? '');
  const [groupB, setGroupB] = useState(initial.groupB ?? initial.groups[1] ?? '');
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  // The server-rendered selects stay disabled until this island runs: hydration would reset a choice made earlier.
  const [live, setLive] = useState(false);
  useEffect(() => setLive(true), []);
  const query = new URLSearchParams({ groupA, groupB, source: initial.source }).toString();

  useEffect(() => {
    if (!groupA || !groupB || groupA === groupB) return;
    if (groupA === data.groupA && groupB === data.groupB) return;
    const ctrl = new AbortController();
    setBusy(true);
    getStudyComparison(initial.study.id, query, ctrl.signal)
      .then((d) => { setData(d); setError(null); })
      .catch((e: Error) => { if (e.name !== 'AbortError') setError(e.message); })
      .finally(() => setBusy(false));
    return () => ctrl.abort();
  }, [groupA, groupB]);

  const nA = data.groupA === null ? 0 : data.samplesPerGroup[data.groupA] ?? 0;
  const nB = data.groupB === null ? 0 : data.samplesPerGroup[data.groupB] ?? 0;
  const few = data.groupA !== null && (nA < 3 || nB < 3);
  const markers = data.comparisons.filter((m) => m.kind === 'marker');
  const phenotypes = data.comparisons.filter((m) => m.kind === 'phenotype');
  const outcomeRows = (rows: typeof data.comparisons) => rows.map((m) => (
    <tr key={m.key}>
      <td className="font-semibold whitespace-nowrap">{m.label}</td>
      <td className="tabular-nums">{m.nSamplesA} / {m.nSamplesB}</td>
      <td className="tabular-nums">{pct(m.fractionA)}</td>
      <td className="tabular-nums">{pct(m.fractionB)}</td>
      <td className="tabular-nums whitespace-nowrap">{signedPct(m.difference)} <span className="text-mica-600">({m.ci95 ? `${signedPct(m.ci95[0])} to ${signedPct(m.ci95[1])}` : 'not tested'})</span></td>
      <td className="tabular-nums">{pValue(m.pValue)}</td>
      <td className="tabular-nums">{pValue(m.pAdjusted)}</td>
      <td className="tabular-nums">{sd(m.sdLogitA)} / {sd(m.sdLogitB)}</td>
    </tr>
  ));
  const outcomeHead = (first: string) => (
    <thead>
      <tr>
        <th>{first}</th><th>Samples (A / B)</th><th>{data.groupA} (typical sample)</th><th>{data.groupB} (typical sample)</th>
        <th>Difference A − B (95% interval)</th><th>p (Welch, per-sample logits)</th><th>p adjusted (BH)</th><th>Between-sample SD, logit (A / B)</th>
      </tr>
    </thead>
  );

  return (
    <div className="space-y-6">
      <section className="card">
        <h2>Marker-positive fraction per sample</h2>
        <p className="text-sm text-mica-600 mt-1">
          Dots: the sample's fraction of measured vesicles that are positive; lines: 95% interval accounting for the spread between its fields. {data.samples.length} sample(s).
        </p>
        {data.samples.length === 0 ? <p className="text-sm mt-3">No results yet.</p> : (
          <>
            <FractionsPlot samples={data.samples} markers={data.panel.map((c) => c.marker)} />
            <div className="overflow-x-auto mt-4">
              <table className="data-table w-full text-sm" data-testid="sample-fractions">
                <thead>
                  <tr>
                    <th>Sample</th><th>Group</th><th>Release</th><th>Fields</th><th>Number of vesicles</th>
                    {data.panel.map((c) => <th key={c.channelIndex}>{c.marker}+ / measured, % (95% interval; DE)</th>)}
                    <th>Median diameter</th><th>Median height</th>
                  </tr>
                </thead>
                <tbody>
                  {[...data.samples].sort((x, y) => x.groupLabel.localeCompare(y.groupLabel) || x.code.localeCompare(y.code)).map((r) => (
                    <tr key={r.sampleId}>
                      <td className="font-semibold">{r.code}</td>
                      <td>{r.groupLabel || '(no group)'}</td>
                      <td>{r.releaseVersion === null ? 'preview' : `v${r.releaseVersion}`}</td>
                      <td className="tabular-nums">{r.fields}</td>
                      <td className="tabular-nums">{r.vesicles}</td>
                      {data.panel.map((c) => {
                        const m = r.markers.find((x) => x.channelIndex === c.channelIndex);
                        return (
                          <td key={c.channelIndex} className="tabular-nums whitespace-nowrap">
                            {m ? <>{m.count} / {m.total} · {pct(m.fraction)} <span className="text-mica-600">({ci(m.lower, m.upper)}; DE {m.designEffect.toFixed(2)})</span></> : '–'}
                          </td>
                        );
                      })}
                      <td className="tabular-nums">{nm(r.medianDiameterNm)}</td>
                      <td className="tabular-nums">{nm(r.medianHeightNm)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            <p className="text-xs text-mica-600 mt-2">{COMPARISON_METHOD.perSample}</p>
          </>
        )}
      </section>
      <section className="card">
        <h2>Compare two groups</h2>
        <div className="flex flex-wrap gap-4 items-end mt-2 no-print">
          <label className="text-sm"><span className="field-label">Group A</span>
            <select className="input" aria-label="Group A" disabled={!live} value={groupA} onChange={(e) => setGroupA(e.target.value)}>
              {data.groups.map((g) => <option key={g} value={g}>{g || '(no group)'} ({data.samplesPerGroup[g] ?? 0} samples)</option>)}
            </select>
          </label>
          <label className="text-sm"><span className="field-label">Group B</span>
            <select className="input" aria-label="Group B" disabled={!live} value={groupB} onChange={(e) => setGroupB(e.target.value)}>
              {data.groups.map((g) => <option key={g} value={g}>{g || '(no group)'} ({data.samplesPerGroup[g] ?? 0} samples)</option>)}
            </select>
          </label>
          <a className="btn-quiet btn" href={`/api/studies/${initial.study.id}/comparison.csv?${query}`} download>Download comparison CSV</a>
          <button type="button" className="btn-quiet btn" onClick={() => window.print()}>Print this comparison</button>
          {busy && <span className="text-sm text-mica-600">Computing…</span>}
        </div>
        {groupA === groupB && <p className="notice notice-caution text-sm mt-3">Choose two different groups.</p>}
        {error && <p className="notice notice-error text-sm mt-3" role="alert">{error}</p>}
        {data.groupA !== null && (
          <>
            <p className="mt-4 text-lg" data-testid="samples-per-group">
              <strong>{data.groupA || '(no group)'}: {nA} sample{nA === 1 ? '' : 's'}</strong>
              {' · '}
              <strong>{data.groupB || '(no group)'}: {nB} sample{nB === 1 ? '' : 's'}</strong>
              <span className="text-sm text-mica-600"> (each sample, not each vesicle, is one observation)</span>
            </p>
            {few && <p className="notice notice-caution text-sm mt-2" role="status" data-testid="few-samples">{COMPARISON_METHOD.fewSamples} Add samples before drawing conclusions.</p>}
            <div className="overflow-x-auto">
              <table className="data-table mt-3 w-full text-sm" data-testid="comparison-table">{outcomeHead('Marker')}<tbody>{outcomeRows(markers)}</tbody></table>
            </div>
            {phenotypes.length > 0 && (
              <div className="overflow-x-auto">
                <h3 className="mt-4 font-semibold">Phenotype combinations (share of vesicles measured in every channel)</h3>
                <table className="data-table mt-2 w-full text-sm" data-testid="phenotype-comparison-table">{outcomeHead('Phenotype')}<tbody>{outcomeRows(phenotypes)}</tbody></table>
              </div>
            )}
            <table className="data-table mt-4 w-full text-sm" data-testid="size-comparison-table">
              <thead><tr><th>Size (per-sample median)</th><th>Samples (A / B)</th><th>{data.groupA} (mean of medians)</th><th>{data.groupB} (mean of medians)</th><th>Difference A − B (95% interval)</th><th>p (Welch)</th><th>p adjusted (BH)</th></tr></thead>
              <tbody>
                {data.sizeComparisons.map((s) => (
                  <tr key={s.measure}>
                    <td>{s.measure === 'diameter_nm' ? 'Equivalent diameter' : 'Height'}</td>
                    <td className="tabular-nums">{s.nSamplesA} / {s.nSamplesB}</td>
                    <td className="tabular-nums">{nm(s.meanMedianANm)}</td><td className="tabular-nums">{nm(s.meanMedianBNm)}</td>
                    <td className="tabular-nums whitespace-nowrap">{signedNm(s.differenceNm)} <span className="text-mica-600">({s.ci95Nm ? `${signedNm(s.ci95Nm[0])} to ${signedNm(s.ci95Nm[1])}` : 'not tested'})</span></td>
                    <td className="tabular-nums">{pValue(s.pValue)}</td><td className="tabular-nums">{pValue(s.pAdjusted)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            <div className="text-xs text-mica-600 mt-3 space-y-1" data-testid="method">
              <p><strong>Method.</strong> {COMPARISON_METHOD.unit}</p>
              <p>{COMPARISON_METHOD.fractions}</p>
              <p>{COMPARISON_METHOD.sizes}</p>
            </div>
            <details className="mt-4" open>
              <summary className="text-sm font-semibold">Pooled vesicles per group (descriptive, no test)</summary>
              <p className="text-xs text-mica-600 mt-1">{COMPARISON_METHOD.pooled}</p>
              <table className="data-table mt-2 w-full text-sm" data-testid="pooled-table">
                <thead><tr><th>Marker or phenotype</th><th>{data.groupA}: positive / measured</th><th>{data.groupB}: positive / measured</th></tr></thead>
                <tbody>
                  {data.pooled.map((p) => (
                    <tr key={p.key}>
                      <td>{p.label}</td>
                      <td className="tabular-nums">{p.a.count} / {p.a.total} · {pct(p.a.fraction)}</td>
                      <td className="tabular-nums">{p.b.count} / {p.b.total} · {pct(p.b.fraction)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </details>
          </>
        )}
      </section>
    </div>
  );
}
