import '@fontsource/work-sans/400.css';
import '@fontsource/work-sans/500.css';
import '@fontsource/work-sans/600.css';
import './styles/tokens.css';
import './styles/base.css';
import { createPinia } from 'pinia';
import { createApp } from 'vue';
import App from './App.vue';
import { startTheme } from './composables/useTheme.ts';
import { createAppRouter } from './router/index.ts';

startTheme();
const app = createApp(App);
app.use(createPinia());
app.use(createAppRouter());
app.mount('#app');
