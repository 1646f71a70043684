import { useCallback } from 'react';
import * as Plot from '@observablehq/plot';
import type { SampleMarkerRow } from '../../../lib/reporting/types';
import { PlotFigure } from './PlotFigure';

/** Dot (positive fraction) and line (95% interval over the sample's fields) per sample and marker, coloured by group. */
export function FractionsPlot({ samples, markers }: { samples: SampleMarkerRow[]; markers: string[] }) {
  // compared by value: the caller builds a new array on every render
  const markerKey = markers.join('\u0000');
  const make = useCallback(() => {
    const data = samples.flatMap((s) =>
      s.markers.filter((m) => m.fraction !== null).map((m) => ({
        sample: s.code, group: s.groupLabel || '(no group)', marker: m.marker,
        fraction: (m.fraction as number) * 100, lower: (m.lower as number) * 100, upper: (m.upper as number) * 100,
      })),
    );
    const order = [...samples].sort((a, b) => a.groupLabel.localeCompare(b.groupLabel) || a.code.localeCompare(b.code)).map((s) => s.code);
    return Plot.plot({
      marginLeft: 90,
      height: Math.max(160, 28 * samples.length + 60),
      x: { label: 'marker-positive (%)', domain: [0, 100], grid: true },
      y: { label: null, domain: order },
      fx: { label: null, domain: markerKey.split('\u0000') },
      color: { legend: true },
      marks: [
        Plot.ruleY(data, { y: 'sample', x1: 'lower', x2: 'upper', fx: 'marker', stroke: 'group', strokeWidth: 2 }),
        Plot.dot(data, { x: 'fraction', y: 'sample', fx: 'marker', fill: 'group', r: 4, tip: true }),
      ],
    });
  }, [samples, markerKey]);
  return <PlotFigure make={make} label="Marker-positive fraction per sample with 95% intervals, grouped by group label" />;
}
