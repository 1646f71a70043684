import { useCallback } from 'react';
import * as Plot from '@observablehq/plot';
import type { Histogram } from '../../../lib/reporting/types';
import { PlotFigure } from './PlotFigure';

/** Bars of a fixed-width histogram (counts per bin, nm on x). */
export function HistogramPlot({ histogram, xLabel, label }: { histogram: Histogram; xLabel: string; label: string }) {
  const make = useCallback(() => {
    const bins = histogram.counts.map((n, j) => ({ x1: histogram.lowNm + j * histogram.binWidthNm, x2: histogram.lowNm + (j + 1) * histogram.binWidthNm, n }));
    return Plot.plot({
      height: 220,
      marginLeft: 50,
      x: { label: xLabel },
      y: { label: 'number of vesicles', grid: true },
      marks: [Plot.rectY(bins, { x1: 'x1', x2: 'x2', y: 'n', fill: '#5b4fc4', insetLeft: 0.5, insetRight: 0.5 }), Plot.ruleY([0])],
    });
  }, [histogram, xLabel]);
  return (
    <figure>
      <PlotFigure make={make} label={label} />
      {(histogram.below > 0 || histogram.above > 0) && (
        <figcaption className="text-xs text-mica-600">
          Outside the axis: {histogram.below} below, {histogram.above} above (counts).
        </figcaption>
      )}
    </figure>
  );
}
