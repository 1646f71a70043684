import OpenSeadragon from 'openseadragon';
import type { Point } from '../../../lib/analysis/types';

/**
 * Image pixel coordinates of the first image of a viewer, with (0, 0) at the centre of the top-left pixel
 * (OpenSeadragon puts (0, 0) at its top-left corner).
 *
 * @param viewer - an opened viewer
 * @param position - a position in the viewer's element (CSS pixels), as pointer events report it
 * @returns the image point, or null while no image is open
 */
export function imagePixelAt(viewer: OpenSeadragon.Viewer, position: OpenSeadragon.Point): Point | null {
  const item = viewer.world.getItemAt(0);
  if (!item) return null;
  const p = item.viewerElementToImageCoordinates(position);
  return { x: p.x - 0.5, y: p.y - 0.5 };
}

/**
 * The square of half-side `radiusPx` around an image pixel, in viewport coordinates (for overlays and `fitBounds`).
 *
 * @param viewer - an opened viewer
 * @param centre - image pixel ((0, 0) = centre of the top-left pixel)
 * @param radiusPx - half the side (image pixels)
 * @returns the rectangle, or null while no image is open
 */
export function viewportSquareAround(viewer: OpenSeadragon.Viewer, centre: Point, radiusPx: number): OpenSeadragon.Rect | null {
  const item = viewer.world.getItemAt(0);
  if (!item) return null;
  const tl = item.imageToViewportCoordinates(centre.x + 0.5 - radiusPx, centre.y + 0.5 - radiusPx);
  const br = item.imageToViewportCoordinates(centre.x + 0.5 + radiusPx, centre.y + 0.5 + radiusPx);
  return new OpenSeadragon.Rect(tl.x, tl.y, br.x - tl.x, br.y - tl.y);
}
