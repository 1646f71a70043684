/**
 * Idempotent seed of an invented demo scenario: the "Harbour Clinic plasma EV pilot", four demo
 * people (one per role), a three-marker panel and de-identified samples. Safe to run repeatedly.
 */
import { eq } from 'drizzle-orm';
import { createDb, type Db } from '../src/lib/db/client';
import { users, studies, studyMembers, markerChannels, samples } from '../src/lib/db/schema';
import { hashPassword } from '../src/lib/auth/passwords';

export const DEMO_PASSWORD = 'vesicle-demo-2026';
export const DEMO_USERS = [
  { email: 'admin@demo.heightlight.test', name: 'Mira Okafor', role: 'admin' },
  { email: 'biologist@demo.heightlight.test', name: 'Tomas Lindqvist', role: 'biologist' },
  { email: 'analyst@demo.heightlight.test', name: 'Ines Varga', role: 'analyst' },
  { email: 'collaborator@demo.heightlight.test', name: 'Kai Brenner', role: 'collaborator' },
] as const;

export const DEMO_STUDY_NAME = 'Harbour Clinic plasma EV pilot (invented demo)';

/** The three-marker panel of the demo studies (invented clones). */
export const DEMO_PANEL = [
  { channelIndex: 0, marker: 'CD9', antibodyClone: 'demo clone HL-9a', fluorophore: 'AF488-like dye', excitationNm: 488, emissionNm: 520 },
  { channelIndex: 1, marker: 'CD63', antibodyClone: 'demo clone HL-63b', fluorophore: 'Cy3-like dye', excitationNm: 561, emissionNm: 590 },
  { channelIndex: 2, marker: 'CD81', antibodyClone: 'demo clone HL-81c', fluorophore: 'AF647-like dye', excitationNm: 640, emissionNm: 670 },
];

const SAMPLES = [
  { code: 'HCP-001', groupLabel: 'patient', controlKind: 'none' },
  { code: 'HCP-002', groupLabel: 'patient', controlKind: 'none' },
  { code: 'HCP-003', groupLabel: 'healthy control', controlKind: 'none' },
  { code: 'HCP-004', groupLabel: 'healthy control', controlKind: 'none' },
  { code: 'HCP-ISO', groupLabel: 'control', controlKind: 'isotype' },
] as const;

export async function seed(db: Db) {
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  const ids: Record<string, string> = {};
  for (const u of DEMO_USERS) {
    await db.insert(users).values({ ...u, passwordHash }).onConflictDoNothing({ target: users.email });
    const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, u.email));
    ids[u.role] = row.id;
  }
  let [study] = await db.select().from(studies).where(eq(studies.name, DEMO_STUDY_NAME));
  if (!study) {
    [study] = await db
      .insert(studies)
      .values({
        name: DEMO_STUDY_NAME,
        description: 'Invented scenario: plasma EVs from two groups, isolated by size-exclusion chromatography, on mica, imaged by AFM in air and by three-colour TIRF.',
        createdBy: ids.admin,
      })
      .returning();
  }
  for (const role of ['biologist', 'analyst', 'collaborator'] as const) {
    await db.insert(studyMembers).values({ studyId: study.id, userId: ids[role], role }).onConflictDoNothing();
  }
  for (const ch of DEMO_PANEL) {
    await db.insert(markerChannels).values({ studyId: study.id, ...ch }).onConflictDoNothing();
  }
  for (const s of SAMPLES) {
    await db
      .insert(samples)
      .values({ studyId: study.id, ...s, source: 'plasma', isolationMethod: 'size-exclusion chromatography', substrate: 'mica', dilution: '1:10', collectionDate: '2026-03-01' })
      .onConflictDoNothing();
  }
  return { studyId: study.id, userIds: ids };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const db = createDb(process.env.DATABASE_URL!, 2);
  seed(db)
    .then(() => db.$client.end())
    .catch((e) => {
      console.error(e);
      process.exit(1);
    });
}
