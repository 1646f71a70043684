// auth-astro ships TypeScript sources that do not pass this project's strict check; these
// declarations describe the two entry points we use, so tsc does not compile its sources.
declare module 'auth-astro-typed' {
  import type { AuthConfig } from '@auth/core/types';
  export function defineConfig(config: Omit<AuthConfig, 'raw'> & { prefix?: string }): Omit<AuthConfig, 'raw'>;
  const integration: (config?: { prefix?: string; configFile?: string; injectEndpoints?: boolean }) => import('astro').AstroIntegration;
  export default integration;
}
declare module 'auth-astro-server-typed' {
  import type { Session } from '@auth/core/types';
  export function getSession(req: Request): Promise<Session | null>;
}
