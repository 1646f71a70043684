/** Listings of the results pages: groups with data in a study, and the released samples a user may see. */
import type { Db } from '../client';
import type { SessionUser } from '../../auth/permissions';
import type { ResultSource } from '../../reporting/types';
import { rows } from './rows';

/** Group labels of the samples that have data in `source`, donors' groups before controls' (cheap: no vesicle rows read). */
export async function listResultGroups(db: Db, studyId: string, source: ResultSource): Promise<string[]> {
  const r = await rows<{ g: string }>(
    db,
    // donors' groups before controls' groups (then by name), so the first two are the ones worth comparing
    `select s.group_label as g from samples s where s.study_id = $1 and exists (${
      source === 'released'
        ? 'select 1 from releases r where r.sample_id = s.id'
        : 'select 1 from fields f join link_runs lr on lr.field_id = f.id and lr.current where f.sample_id = s.id'
    }) group by s.group_label order by bool_or(s.control_kind <> 'none'), 1`,
    [studyId],
  );
  return r.map((x) => x.g);
}

/** Samples with at least one release in the studies the user belongs to (admins: all), newest first. */
export async function listReleasedSamples(db: Db, user: SessionUser) {
  return rows<{ sampleId: string; code: string; groupLabel: string; studyId: string; studyName: string; version: number; releasedAt: Date }>(
    db,
    `select s.id as "sampleId", s.code, s.group_label as "groupLabel", st.id as "studyId", st.name as "studyName",
            r.version, r.released_at as "releasedAt"
       from samples s
       join studies st on st.id = s.study_id
       join lateral (select version, released_at from releases where sample_id = s.id order by version desc limit 1) r on true
      where $2 or exists (select 1 from study_members m where m.study_id = st.id and m.user_id = $1)
      order by st.name, s.code`,
    [user.id, user.role === 'admin'],
  );
}
