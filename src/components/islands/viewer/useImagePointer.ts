import { useEffect, useRef } from 'react';
import OpenSeadragon from 'openseadragon';
import type { Point } from '../../../lib/analysis/types';
import { imagePixelAt } from './imageCoordinates';

/**
 * Reports the image pixel under the pointer as it moves over a viewer ((0, 0) = centre of the top-left pixel).
 *
 * @param viewer - the viewer whose element takes the pointer
 * @param onMove - called with the image point on each move (not called while no image is open)
 */
export function useImagePointer(viewer: OpenSeadragon.Viewer | null | undefined, onMove: (p: Point) => void): void {
  const latest = useRef(onMove);
  latest.current = onMove;
  useEffect(() => {
    if (!viewer?.element) return;
    const tracker = new OpenSeadragon.MouseTracker({
      element: viewer.element,
      moveHandler: (e) => {
        const p = imagePixelAt(viewer, (e as OpenSeadragon.PointerMouseTrackerEvent).position);
        if (p) latest.current(p);
      },
    });
    return () => tracker.destroy();
  }, [viewer]);
}

/**
 * Reports quick clicks (not drags) on a viewer in image pixels, instead of OpenSeadragon's click-to-zoom.
 *
 * @param viewer - the viewer clicked
 * @param onClick - called with the image point ((0, 0) = centre of the top-left pixel)
 */
export function useImageClick(viewer: OpenSeadragon.Viewer | null | undefined, onClick: (p: Point) => void): void {
  const latest = useRef(onClick);
  latest.current = onClick;
  useEffect(() => {
    if (!viewer) return;
    const handler = (e: OpenSeadragon.CanvasClickEvent) => {
      if (!e.quick) return;
      e.preventDefaultAction = true;
      const p = imagePixelAt(viewer, e.position);
      if (p) latest.current(p);
    };
    viewer.addHandler('canvas-click', handler);
    return () => viewer.removeHandler('canvas-click', handler);
  }, [viewer]);
}
