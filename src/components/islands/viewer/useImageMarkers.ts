import { useEffect, useRef } from 'react';
import type OpenSeadragon from 'openseadragon';
import type { Point } from '../../../lib/analysis/types';
import { viewportSquareAround } from './imageCoordinates';

/** A round marker drawn over an image: its look comes from CSS classes, its place and size from the image. */
export interface ImageMarker {
  /** Centre (image pixels, (0, 0) = centre of the top-left pixel). */
  p: Point;
  /** Radius (image pixels). */
  r: number;
  /** CSS classes of the marker element. */
  cls: string;
  label?: string;
}

/**
 * Draws markers as OpenSeadragon overlays placed in image pixels, so they move and scale with the image;
 * drawn again whenever the list changes and when the image (re)opens.
 *
 * @param viewer - the viewer drawn on
 * @param markers - what to draw (replaces everything drawn before)
 */
export function useImageMarkers(viewer: OpenSeadragon.Viewer | null | undefined, markers: readonly ImageMarker[]): void {
  const latest = useRef(markers);
  latest.current = markers;
  useEffect(() => {
    if (!viewer) return;
    const redraw = () => drawMarkers(viewer, latest.current);
    viewer.addHandler('open', redraw);
    return () => viewer.removeHandler('open', redraw);
  }, [viewer]);
  // also covers an image that opened before the handler above was attached
  useEffect(() => {
    if (viewer) drawMarkers(viewer, markers);
  }, [viewer, markers]);
}

function drawMarkers(viewer: OpenSeadragon.Viewer, markers: readonly ImageMarker[]) {
  if (!viewer.world.getItemAt(0)) return;
  viewer.clearOverlays();
  for (const m of markers) {
    const location = viewportSquareAround(viewer, m.p, m.r);
    if (!location) continue;
    const el = document.createElement('div');
    el.className = m.cls;
    if (m.label) el.textContent = m.label;
    viewer.addOverlay({ element: el, location });
  }
}
