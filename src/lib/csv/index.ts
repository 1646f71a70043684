export { writeCsv, csvFixed, RESEARCH_USE_COMMENT, type CsvCell, type CsvFixed, type WriteCsvInput } from './writeCsv';
