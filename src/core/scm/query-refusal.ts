/**
 * The engine refuses a question as it was asked: it names a variable, level or arm the model
 * does not have, or asks something the model cannot answer (a segment on a descendant of the
 * treatment, an empty segment, a categorical outcome without a level, a shift of a discrete
 * treatment, too many posted rows, …). The caller can fix the question and ask again.
 *
 * Every refusal of a query is this class or a subclass (InterventionError, SegmentError), so a
 * service can tell a bad question from a bug: any other RangeError out of the engine is a bug.
 */
export class QueryRefusalError extends RangeError {
  constructor(message: string) {
    super(message);
    this.name = 'QueryRefusalError';
  }
}
