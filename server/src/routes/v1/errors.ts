/** How /v1 maps engine failures to problems (the problem codes are in http/problem.ts). */
import { HttpError, type ProblemCode } from '../../http/problem.ts';

/** Map an engine failure code to our problem. */
export function engineProblem(code: string, message: string, satName: string): HttpError {
  const problem: ProblemCode = code === 'decayed' ? 'decayed' : 'propagation-failed';
  const hint =
    code === 'too-far-from-epoch'
      ? ' Ask for a time nearer the element set\u2019s epoch, or upload a fresh element set.'
      : code === 'decayed'
        ? ' Upload a fresh element set if the object is still in orbit.'
        : '';
  return new HttpError(problem, `${satName}: ${message}.${hint}`, { reason: code });
}
