import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { App } from './App.tsx';
import { EngineProvider } from './engine/EngineProvider.tsx';
import { createBackend, demoInput, pageMode } from './engine/choose-backend.ts';
import './styles.css';

const root = document.getElementById('root');
if (!root) throw new Error('index.html has no #root element');
createRoot(root).render(
  <StrictMode>
    <EngineProvider mode={pageMode()} createBackend={createBackend} demoInput={demoInput}>
      <App />
    </EngineProvider>
  </StrictMode>,
);
