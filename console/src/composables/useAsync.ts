/**
 * The one place that owns async state for the pages: `loading`, the last `error` (with its
 * field-level messages) and the expired-session path. A 401 while someone was signed in means the
 * session ended on the server: forget the user and go to sign-in, returning here afterwards.
 */
import { computed, ref, shallowRef } from 'vue';
import { useRouter } from 'vue-router';
import { ApiError } from '../api/client.ts';
import { useNoticesStore } from '../stores/notices.ts';
import { useSessionStore } from '../stores/session.ts';

export function toApiError(e: unknown): ApiError {
  if (e instanceof ApiError) return e;
  const message = e instanceof Error ? e.message : String(e);
  return new ApiError({ status: 0, code: 'client', title: 'Something went wrong in the console', detail: message });
}

/** A sentence for the person, from any ApiError. */
export function describeError(err: ApiError): string {
  switch (err.code) {
    case 'network':
      return 'The server could not be reached. Check your connection and try again.';
    case 'forbidden':
      return err.detail || 'Your role in this organization does not allow that.';
    case 'too-many-attempts':
    case 'rate-limited':
      return `${err.detail || 'Too many attempts.'}${err.retryAfterS ? ` Try again in ${Math.ceil(err.retryAfterS / 60)} min.` : ''}`;
    default:
      return err.detail || err.title;
  }
}

export interface AsyncOptions<R> {
  /** Said by the live region when the call succeeds. */
  success?: string | ((result: R) => string | undefined);
  /** 'spoken': read out only, no toast, when the page shows the outcome in place. Default 'toast'. */
  successAs?: 'toast' | 'spoken';
}

export function useAsync<A extends unknown[], R>(fn: (...args: A) => Promise<R>, options: AsyncOptions<R> = {}) {
  const router = useRouter();
  const session = useSessionStore();
  const notices = useNoticesStore();
  const loading = ref(false);
  const error = shallowRef<ApiError | null>(null);
  const fieldErrors = computed<Record<string, string>>(() => error.value?.fieldErrors() ?? {});
  const message = computed(() => (error.value ? describeError(error.value) : ''));

  async function expire() {
    session.clear(true);
    notices.push('Your session has ended. Sign in again to carry on where you were.', 'info', 10_000);
    const here = router.currentRoute.value;
    const next = here.meta.public ? undefined : here.fullPath;
    await router.push({ name: 'sign-in', query: next ? { next } : {} });
  }

  /** Run the call; resolves to its result, or to undefined after a failure (kept in `error`). */
  async function run(...args: A): Promise<R | undefined> {
    loading.value = true;
    error.value = null;
    try {
      const result = await fn(...args);
      const said = typeof options.success === 'function' ? options.success(result) : options.success;
      if (said) notices.push(said, 'success', undefined, { spokenOnly: options.successAs === 'spoken' });
      return result;
    } catch (e) {
      const err = toApiError(e);
      error.value = err;
      if (err.status === 401 && session.signedIn) await expire();
      return undefined;
    } finally {
      loading.value = false;
    }
  }

  function reset() {
    error.value = null;
  }

  return { loading, error, fieldErrors, message, run, reset };
}
