/** Entry of the built script (/widget/nadir-track.js and its classic twin): defines <nadir-track>. */
import { register } from './index.ts';

register();
