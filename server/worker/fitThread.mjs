// Entry of the fit thread: registers tsx (worker threads do not inherit its loader) and runs fitThreadMain.ts.
import { register } from 'tsx/esm/api';

register();
await import('./fitThreadMain.ts');
