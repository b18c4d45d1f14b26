/** Copy text, saying so to screen readers; falls back to selecting the text when copying is refused. */
import { ref } from 'vue';
import { useNoticesStore } from '../stores/notices.ts';

export function useClipboard() {
  const notices = useNoticesStore();
  const copied = ref(false);
  let timer: ReturnType<typeof setTimeout> | undefined;

  async function copy(text: string, what = 'Text'): Promise<boolean> {
    try {
      await navigator.clipboard.writeText(text);
      copied.value = true;
      notices.push(`${what} copied to the clipboard.`, 'success', 3000);
      clearTimeout(timer);
      timer = setTimeout(() => (copied.value = false), 2000);
      return true;
    } catch {
      notices.push('The browser did not allow copying. Select the text and copy it by hand.', 'error');
      return false;
    }
  }

  return { copied, copy };
}
