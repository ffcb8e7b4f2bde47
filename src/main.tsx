import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import './styles.css';
import '#shared/schemas/plain-messages';
import { Providers } from './app/providers';
import { AppRouter } from './app/router';
import { warmIntlSoon } from './lib/warm-intl';

const container = document.getElementById('root');
if (!container) throw new Error('index.html must contain <div id="root">');

createRoot(container).render(
  <StrictMode>
    <Providers>
      <AppRouter />
    </Providers>
  </StrictMode>,
);

warmIntlSoon();
