import '@fontsource/ibm-plex-sans/400.css';
import '@fontsource/ibm-plex-sans/500.css';
import '@fontsource/ibm-plex-sans/600.css';
import '@fontsource/ibm-plex-mono/400.css';
import './styles/base.css';
import { createPinia } from 'pinia';
import { createApp } from 'vue';
import App from './App.vue';
import { naiveA11y } from './plugins/naive-a11y';
import { router } from './router';

createApp(App).use(createPinia()).use(router).use(naiveA11y).mount('#app');
