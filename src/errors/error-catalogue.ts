/**
 * The whole error catalogue in one list: the service's own errors (`catalogue.ts`) and the
 * data errors (`data-errors.ts`) the model, job and query errors (`model-errors.ts`) and the report-link errors (`report-errors.ts`). The error handler takes titles from here and the docs list
 * it; tests/api/error-catalogue.test.ts pins every code and status.
 */
import { API_ERRORS, type CatalogueEntry } from './catalogue.js';
import { DATA_ERRORS } from './data-errors.js';
import { MODEL_ERRORS } from './model-errors.js';
import { REPORT_ERRORS } from './report-errors.js';

/** Every error code the service can answer with, with its status, title and message template. */
export const ERROR_CATALOGUE: Readonly<Record<string, CatalogueEntry>> = Object.freeze({ ...API_ERRORS, ...DATA_ERRORS, ...MODEL_ERRORS, ...REPORT_ERRORS });
