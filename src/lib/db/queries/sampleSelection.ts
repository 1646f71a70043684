/** Which rows a sample's results are read from: the sample, its study's panel, its current link runs and latest release. */
import type { Db } from '../client';
import { appAccessCache } from '../../auth/session';
import type { ReleaseInfo } from '../../reporting/types';
import { rows, type Panel } from './rows';

export interface SampleContext {
  id: string;
  code: string;
  groupLabel: string;
  controlKind: string;
  studyId: string;
  studyName: string;
}

/** The sample with its study, or null. */
export async function getSampleContext(db: Db, sampleId: string): Promise<SampleContext | null> {
  const [row] = await rows<SampleContext>(
    db,
    `select s.id, s.code, s.group_label as "groupLabel", s.control_kind as "controlKind", s.study_id as "studyId", st.name as "studyName"
       from samples s join studies st on st.id = s.study_id where s.id = $1`,
    [sampleId],
  );
  return row ?? null;
}

/** The study's marker panel in channel order (remembered by the app's access memory when it listens). */
export async function getPanel(db: Db, studyId: string): Promise<Panel> {
  const load = () => rows<{ channelIndex: number; marker: string }>(
    db,
    `select channel_index as "channelIndex", marker from marker_channels where study_id = $1 order by channel_index`,
    [studyId],
  );
  const cache = appAccessCache(db);
  return cache ? ((await cache.panel(studyId, async () => ({ channels: await load() })))!).channels : load();
}

/**
 * What the results guard needs about a sample, in one round trip: the sample, its current link runs and its
 * latest release (null when never released). Null when there is no such sample.
 */
export async function getSampleSelectionFacts(db: Db, sampleId: string): Promise<{
  sample: SampleContext; currentLinkRunIds: string[]; latestRelease: (ReleaseInfo & { linkRunIds: string[] }) | null; fieldsFingerprint: string;
} | null> {
  const [row] = await rows<SampleContext & { currentLinkRunIds: string[]; fieldsFingerprint: string | null; release: { id: string; version: number; releasedAt: string; linkRunIds: string[] } | null }>(
    db,
    `select s.id, s.code, s.group_label as "groupLabel", s.control_kind as "controlKind", s.study_id as "studyId", st.name as "studyName",
            array(select lr.id::text from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = s.id and lr.current order by lr.id) as "currentLinkRunIds",
            -- every field column the per-field breakdown shows, and each field's latest registration version
            (select md5(string_agg(concat_ws('/', f.id, f.version, f.status, f.name, f.afm_pixel_nm, f.fl_pixel_nm,
                                             (select max(r.version) from registrations r where r.field_id = f.id)), ',' order by f.id))
               from fields f where f.sample_id = s.id) as "fieldsFingerprint",
            (select json_build_object('id', r.id, 'version', r.version, 'releasedAt', r.released_at, 'linkRunIds', r.link_run_ids)
               from releases r where r.sample_id = s.id order by r.version desc limit 1) as release
       from samples s join studies st on st.id = s.study_id where s.id = $1`,
    [sampleId],
  );
  if (!row) return null;
  const { currentLinkRunIds, release, fieldsFingerprint, ...sample } = row;
  return {
    sample,
    currentLinkRunIds,
    fieldsFingerprint: fieldsFingerprint ?? '',
    latestRelease: release ? { id: release.id, version: release.version, releasedAt: new Date(release.releasedAt).toISOString(), linkRunIds: release.linkRunIds } : null,
  };
}

/** Ids of the current link runs of the sample's fields (what a new release would freeze). */
export async function getCurrentLinkRunIds(db: Db, sampleId: string): Promise<string[]> {
  const r = await rows<{ id: string }>(
    db,
    `select lr.id from link_runs lr join fields f on f.id = lr.field_id where f.sample_id = $1 and lr.current order by lr.id`,
    [sampleId],
  );
  return r.map((x) => x.id);
}
