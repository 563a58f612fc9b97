// Renderer entry: mounts the app. The same bundle runs inside Electron and in a browser tab.
import { createRoot } from 'react-dom/client';
import { App } from './app/App';
import './styles.css';

createRoot(document.getElementById('root')!).render(<App />);
