import { setupIonicReact } from '@ionic/react';
import '@ionic/react/css/core.css';
import '@ionic/react/css/normalize.css';
import '@ionic/react/css/structure.css';
import '@ionic/react/css/typography.css';
import '@ionic/react/css/padding.css';
// Ionic's flex and display utility classes are left out: no screen uses them (first-screen size).
import '@ionic/react/css/palettes/dark.system.css';
// The palette and fonts come with the app's root (app/App.tsx); variables.css outranks
// Ionic's defaults whatever order the stylesheets load in.

setupIonicReact({ mode: 'md' });
