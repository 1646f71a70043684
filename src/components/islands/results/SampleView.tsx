import { fieldStatusWord } from '../../../lib/pages/fieldStatusWords';
import { useState } from 'react';
import type { SampleResults } from '../../../lib/reporting/types';
import { HistogramPlot } from './HistogramPlot';
import { ci, nm, pct } from './format';
import { COMPARISON_METHOD } from '../../../lib/reporting/methodText';

const sd = (x: number | null) => (x === null ? '–' : `${(x * 100).toFixed(1)} %`);
const icc = (x: number | null) => (x === null ? '–' : x.toFixed(3));

/** One sample's results: marker fractions, phenotype combinations, size distributions, per-field QC. */
export function SampleView({ r }: { r: SampleResults }) {
  const [phenotype, setPhenotype] = useState<string>('all');
  const dHist = phenotype === 'all' ? r.diameter.histogram : r.diameter.byPhenotype[phenotype];
  const hHist = phenotype === 'all' ? r.height.histogram : r.height.byPhenotype[phenotype];
  return (
    <div className="space-y-6">
      <section className="card">
        <h2>Marker-positive vesicles</h2>
        <p className="text-sm text-mica-600 mt-1" data-testid="sample-totals">
          {r.fieldsAnalysed} field(s) and {r.vesicles} vesicles analysed ({r.phenotyped} measured in every channel). Median diameter {nm(r.diameter.medianNm)}
          {' '}(IQR {nm(r.diameter.q1Nm)}–{nm(r.diameter.q3Nm)}), median height {nm(r.height.medianNm)}.
        </p>
        <table className="data-table mt-3 w-full text-sm" data-testid="marker-table">
          <thead><tr><th>Marker</th><th>Number positive</th><th>Number measured in this channel</th><th>Positive</th><th>95% interval over fields</th><th>Between-field SD</th><th>ICC</th><th>Design effect</th></tr></thead>
          <tbody>
            {r.markers.map((m) => (
              <tr key={m.channelIndex}>
                <td className="font-semibold">{m.marker}</td><td>{m.count}</td><td>{m.total}</td><td>{pct(m.fraction)}</td><td>{ci(m.lower, m.upper)}</td>
                <td>{sd(m.betweenFieldSd)}</td><td>{icc(m.icc)}</td><td>{m.designEffect.toFixed(2)}</td>
              </tr>
            ))}
          </tbody>
        </table>
        <p className="text-xs text-mica-600 mt-2">
          {COMPARISON_METHOD.perSample} Vesicles outside a channel's frame are not measured there and leave that marker's denominator.
          Fractions pooled over vesicles are descriptive: compare groups on the study's compare page, where each sample counts once.
        </p>
      </section>
      <section className="card">
        <h2>Phenotype combinations</h2>
        <table className="data-table mt-3 w-full text-sm">
          <thead><tr><th>Phenotype</th><th>Number of vesicles</th><th>Share of {r.phenotyped} measured in every channel</th><th>95% interval over fields</th><th>Between-field SD</th></tr></thead>
          <tbody>
            {r.phenotypes.map((p) => (
              <tr key={p.bits}><td>{p.label}</td><td>{p.count}</td><td>{pct(p.fraction)}</td><td>{ci(p.lower, p.upper)}</td><td>{sd(p.betweenFieldSd)}</td></tr>
            ))}
          </tbody>
        </table>
      </section>
      <section className="card">
        <div className="flex flex-wrap items-end justify-between gap-3">
          <h2>Size distributions</h2>
          <label className="text-sm">
            <span className="field-label">Vesicles shown</span>
            <select className="input" value={phenotype} onChange={(e) => setPhenotype(e.target.value)}>
              <option value="all">All vesicles</option>
              {r.phenotypes.map((p) => <option key={p.bits} value={String(p.bits)}>{p.label} ({p.count})</option>)}
            </select>
          </label>
        </div>
        <div className="grid gap-4 md:grid-cols-2 mt-3">
          {dHist && <HistogramPlot histogram={dHist} xLabel="equivalent diameter (nm)" label="Histogram of equivalent diameter (nm)" />}
          {hHist && <HistogramPlot histogram={hHist} xLabel="height (nm)" label="Histogram of height (nm)" />}
        </div>
      </section>
      {r.groupSpread && r.groupSpread.samples > 1 && (
        <section className="card">
          <h2>Samples of group {r.groupSpread.group || '(no group)'} (quality control)</h2>
          <p className="text-sm text-mica-600 mt-1">
            Where this sample stands among the {r.groupSpread.samples} samples of its group{r.source === 'released' ? ' with a release' : ''}: a sample far from the others is worth a second look before it enters a comparison.
          </p>
          <table className="data-table mt-3 w-full text-sm" data-testid="group-spread">
            <thead><tr><th>Marker</th><th>This sample</th><th>Typical sample of the group</th><th>Range over the group</th><th>Between-sample SD (logit)</th></tr></thead>
            <tbody>
              {r.groupSpread.markers.map((m) => (
                <tr key={m.channelIndex}>
                  <td className="font-semibold">{m.marker}</td><td>{pct(m.sampleFraction)}</td><td>{pct(m.typicalFraction)}</td>
                  <td>{pct(m.lowestFraction)} – {pct(m.highestFraction)}</td><td>{m.sdLogit === null ? '–' : m.sdLogit.toFixed(2)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}
      <section className="card">
        <h2>Fields (quality control)</h2>
        <table className="data-table mt-3 w-full text-sm" data-testid="field-table">
          <thead>
            <tr><th>Field</th><th>Status</th><th>Number of vesicles</th>{r.panel.map((c) => <th key={c.channelIndex}>{c.marker}+ / measured (%)</th>)}<th>FRE</th><th>Number of fiducials</th><th>AFM pixel</th></tr>
          </thead>
          <tbody>
            {r.fields.map((f) => (
              <tr key={f.fieldId}>
                <td>{f.name}</td><td>{fieldStatusWord(f.status)}</td><td>{f.vesicles}</td>
                {f.positives.map((k, i) => <td key={i} className="tabular-nums">{k} / {f.measured[i]} ({pct(f.measured[i] ? k / f.measured[i] : null)})</td>)}
                <td>{nm(f.freNm)}</td><td>{f.nbFiducials ?? '–'}</td><td>{f.afmPixelNm === null ? '–' : `${f.afmPixelNm.toFixed(2)} nm/px`}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
