// The language server's command extensions, as the extension uses them.
// The wire format is defined once, in the server (lsp/src/ext.rs); these
// types mirror the fields this extension reads.

export const PARSE = "trellis.parse";
export const SAMPLE = "trellis.sample";
export const RUN_TEST = "trellis.runTest";

export interface ParseParams {
  uri: string;
  sentence?: string;
  sentences?: string[];
  kbest?: number;
  picture?: boolean;
}

export interface SentenceParse {
  sentence: string;
  parsed: boolean;
  tree: string | null;
  probability: number | null;
  logProbability: number | null;
  sentenceProbability: number | null;
  parseCount: string | null;
  kbest: { tree: string; probability: number }[];
  explanation: string | null;
  error: string | null;
  picture?: string;
}

export interface ParseResult {
  results: SentenceParse[];
}

export interface SampleParams {
  uri: string;
  count?: number;
  seed?: number;
  trees?: boolean;
}

export interface SampleResult {
  seed: number;
  samples: { sentence: string; tree?: string }[];
}

export interface Position {
  line: number;
  character: number;
}

export interface Location {
  uri: string;
  range: { start: Position; end: Position };
}

export interface CaseReport {
  expect: string;
  sentence: string;
  location: Location | null;
  passed: boolean;
  tied: boolean;
  tree: string | null;
  probability: number | null;
  failure: string[];
}

export interface TestReport {
  name: string;
  location: Location | null;
  passed: boolean;
  cases: CaseReport[];
}

export interface RunTestParams {
  uri: string;
  test?: string;
}

export interface RunTestResult {
  passed: number;
  failed: number;
  tests: TestReport[];
}
