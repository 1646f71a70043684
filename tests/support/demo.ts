/** The demo people seeded by scripts/seed.ts (invented). */
export const DEMO_PASSWORD = 'vesicle-demo-2026';
export const DEMO = {
  admin: 'admin@demo.heightlight.test',
  biologist: 'biologist@demo.heightlight.test',
  analyst: 'analyst@demo.heightlight.test',
  collaborator: 'collaborator@demo.heightlight.test',
} as const;
export type DemoRole = keyof typeof DEMO;
export const ROLES: DemoRole[] = ['admin', 'biologist', 'analyst', 'collaborator'];
