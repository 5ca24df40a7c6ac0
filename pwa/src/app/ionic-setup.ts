import { setupIonicReact } from '@ionic/react';
import '@ionic/react/css/core.css';
import '@ionic/react/css/normalize.css';
import '@ionic/react/css/structure.css';
import '@ionic/react/css/typography.css';
import '@ionic/react/css/padding.css';
// Ionic's flex and display utility classes are left out: no screen uses them (first-screen size).
import '@ionic/react/css/palettes/dark.system.css';
import '../theme/fonts';
import '../theme/variables.css';

setupIonicReact({ mode: 'md' });
