import { useEffect } from 'react';
import type OpenSeadragon from 'openseadragon';

/**
 * Keeps follower viewers on the leader's viewport: on every animation frame, viewport change and resize of
 * the leader (and when a follower opens), each follower takes the leader's current zoom and centre, so
 * stacked layers never drift apart.
 *
 * @param viewers - the leader first, then its followers
 */
export function useViewerSync(viewers: readonly OpenSeadragon.Viewer[]): void {
  useEffect(() => {
    const [leader, ...followers] = viewers;
    if (!leader || !followers.length) return;
    const sync = () => {
      const zoom = leader.viewport.getZoom(true);
      const centre = leader.viewport.getCenter(true);
      for (const f of followers) {
        f.viewport.zoomTo(zoom, undefined, true);
        f.viewport.panTo(centre, true);
      }
    };
    const events = ['animation', 'animation-finish', 'viewport-change', 'resize'] as const;
    for (const ev of events) leader.addHandler(ev, sync);
    followers.forEach((f) => f.addHandler('open', sync));
    // followers that opened before these handlers were attached take the leader's view now
    sync();
    return () => {
      for (const ev of events) leader.removeHandler(ev, sync);
      followers.forEach((f) => f.removeHandler('open', sync));
    };
  }, [viewers]);
}
