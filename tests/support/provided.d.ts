// Values vitest.config.ts hands to tests through `provide`; tests read them with `inject('name')`.
declare module 'vitest' {
  export interface ProvidedContext {
    /** Mutated files per fuzz run (src/lib/imaging/__tests__/fuzz.test.ts); FUZZ_CASES in the environment. */
    fuzzCases: number;
  }
}

export {};
