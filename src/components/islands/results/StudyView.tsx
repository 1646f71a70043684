import { useEffect, useState } from 'react';
import type { StudyComparison } from '../../../lib/reporting/types';
import { api } from '../../../lib/api-client/http';
import { FractionsPlot } from './FractionsPlot';
import { ci, nm, pct, pValue } from './format';

/** The group size up to which the size test uses every raw value (MAX_RANK_SAMPLE on the server). */
const MAX_RANK_VESICLES = '5000';

/** Marker fractions of every sample by group, and the comparison of two chosen groups (fetched from the API). */
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
    api<never>(`/api/studies/${initial.study.id}/comparison?${query}`, null, { signal: ctrl.signal })
      .then((d) => { setData(d as unknown as StudyComparison); setError(null); })
      .catch((e: Error) => { if (e.name !== 'AbortError') setError(e.message); })
      .finally(() => setBusy(false));
    return () => ctrl.abort();
  }, [groupA, groupB]);

  return (
    <div className="space-y-6">
      <section className="card">
        <h2>Marker-positive fraction per sample</h2>
        <p className="text-sm text-mica-600 mt-1">Dots: fraction of vesicles positive; lines: 95% Wilson interval. {data.samples.length} sample(s).</p>
        {data.samples.length === 0 ? <p className="text-sm mt-3">No results yet.</p> : (
          <>
            <FractionsPlot samples={data.samples} markers={data.panel.map((c) => c.marker)} />
            <div className="overflow-x-auto mt-4">
              <table className="data-table w-full text-sm" data-testid="sample-fractions">
                <thead>
                  <tr>
                    <th>Sample</th><th>Group</th><th>Release</th><th>Vesicles (count)</th>
                    {data.panel.map((c) => <th key={c.channelIndex}>{c.marker}+ (positive / analysed, %, 95% Wilson)</th>)}
                  </tr>
                </thead>
                <tbody>
                  {[...data.samples].sort((x, y) => x.groupLabel.localeCompare(y.groupLabel) || x.code.localeCompare(y.code)).map((r) => (
                    <tr key={r.sampleId}>
                      <td className="font-semibold">{r.code}</td>
                      <td>{r.groupLabel || '(no group)'}</td>
                      <td>{r.releaseVersion === null ? 'preview' : `v${r.releaseVersion}`}</td>
                      <td className="tabular-nums">{r.vesicles}</td>
                      {data.panel.map((c) => {
                        const m = r.markers.find((x) => x.channelIndex === c.channelIndex);
                        return (
                          <td key={c.channelIndex} className="tabular-nums whitespace-nowrap">
                            {m ? <>{m.count} / {m.total} · {pct(m.fraction)} <span className="text-mica-600">({ci(m.lower, m.upper)})</span></> : '–'}
                          </td>
                        );
                      })}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </>
        )}
      </section>
      <section className="card">
        <h2>Compare two groups</h2>
        <div className="flex flex-wrap gap-4 items-end mt-2 no-print">
          <label className="text-sm"><span className="field-label">Group A</span>
            <select className="input" aria-label="Group A" disabled={!live} value={groupA} onChange={(e) => setGroupA(e.target.value)}>
              {data.groups.map((g) => <option key={g} value={g}>{g || '(no group)'}</option>)}
            </select>
          </label>
          <label className="text-sm"><span className="field-label">Group B</span>
            <select className="input" aria-label="Group B" disabled={!live} value={groupB} onChange={(e) => setGroupB(e.target.value)}>
              {data.groups.map((g) => <option key={g} value={g}>{g || '(no group)'}</option>)}
            </select>
          </label>
          <a className="btn-quiet btn" href={`/api/studies/${initial.study.id}/comparison.csv?${query}`} download>Download comparison CSV</a>
          <button type="button" className="btn-quiet btn" onClick={() => window.print()}>Print this comparison</button>
          {busy && <span className="text-sm text-mica-600">Computing…</span>}
        </div>
        {groupA === groupB && <p className="notice notice-caution text-sm mt-3">Choose two different groups.</p>}
        {error && <p className="notice notice-error text-sm mt-3" role="alert">{error}</p>}
        {data.markerComparisons.length > 0 && (
          <>
            <table className="data-table mt-3 w-full text-sm" data-testid="comparison-table">
              <thead><tr><th>Marker</th><th>{data.groupA}</th><th>{data.groupB}</th><th>Difference A − B (95% Newcombe)</th><th>Test</th><th>p</th><th>p adjusted (BH)</th></tr></thead>
              <tbody>
                {data.markerComparisons.map((m) => (
                  <tr key={m.channelIndex}>
                    <td className="font-semibold">{m.marker}</td>
                    <td>{pct(m.a.fraction)} <span className="text-mica-600">({m.a.count}/{m.a.total})</span></td>
                    <td>{pct(m.b.fraction)} <span className="text-mica-600">({m.b.count}/{m.b.total})</span></td>
                    <td>{m.difference === null ? '–' : `${(m.difference * 100).toFixed(1)} % (${ci(m.differenceLower, m.differenceUpper)})`}</td>
                    <td>{m.test === 'fisher_exact' ? 'Fisher exact' : m.test === 'chi_square' ? 'chi-square' : '–'}</td>
                    <td>{pValue(m.pValue)}</td><td>{pValue(m.pAdjusted)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            <table className="data-table mt-4 w-full text-sm">
              <thead><tr><th>Size</th><th>Median {data.groupA}</th><th>Median {data.groupB}</th><th>Vesicles tested (count)</th><th>Mann–Whitney U</th><th>p</th></tr></thead>
              <tbody>
                {data.sizeComparisons.map((s) => (
                  <tr key={s.measure}>
                    <td>{s.measure === 'diameter_nm' ? 'Equivalent diameter' : 'Height'}</td>
                    <td>{nm(s.medianA)}</td><td>{nm(s.medianB)}</td>
                    <td>{s.usedA} of {s.nA} / {s.usedB} of {s.nB}</td>
                    <td>{s.uStatistic ?? '–'}</td><td>{pValue(s.pValue)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            <p className="text-xs text-mica-600 mt-2">
              Vesicles are pooled per group and tests treat them as independent, although vesicles of one sample are not:
              read p-values as descriptive, and compare samples (the dots above) before drawing conclusions.
              The size test ranks every vesicle: exactly for groups of up to {MAX_RANK_VESICLES} vesicles, and above that on values rounded to 0.5 nm (diameter) and 0.1 nm (height), with ties counted half.
            </p>
          </>
        )}
      </section>
    </div>
  );
}
