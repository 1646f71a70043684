import { describe, expect, it } from 'vitest';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import ReviewPanel from '../../src/components/islands/ReviewPanel';

/** Renders the panel as the field page does on the server, with a link-run summary of the analysis core's shape. */
function render(summary: Record<string, unknown> | null): string {
  return renderToStaticMarkup(createElement(ReviewPanel, { fieldId: 'f', status: 'linked', version: 1, canAnalyse: false, reviews: [], summary }));
}

const text = (html: string) => html.replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ');

describe('ReviewPanel', () => {
  it('shows the spots without a vesicle per marker, out of the spots detected, with an explanation', () => {
    const html = render({
      nbVesicles: 40, nbOutOfFrame: 2, nbVesiclesWithoutMarker: 11, positiveByMarker: { CD9: 20, CD63: 9 },
      spotsWithoutVesicleByMarker: { CD9: 7, CD63: 0 },
      channels: { CD9: { nbSpots: 31 }, CD63: { nbSpots: 12 } },
    });
    const t = text(html);
    expect(html).toContain('data-testid="spots-without-vesicle"');
    expect(t).toContain('CD9 7 spots of 31 detected');
    expect(t).toContain('CD63 0 spots of 12 detected');
    expect(t).toMatch(/free label or antibody aggregates/);
  });

  it('reads the linker-side name of the count and leaves the block out without a summary', () => {
    expect(text(render({ nbVesicles: 3, positiveByMarker: {}, unmatchedSpotsByMarker: { CD81: 5 } }))).toContain('CD81 5 spots');
    expect(render(null)).not.toContain('spots-without-vesicle');
  });
});
