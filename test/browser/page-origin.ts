// The port Vite serves the renderer on during Playwright runs. CW_PW_PORT lets two checkouts run their
// browser tests side by side on one machine; the default is the one `vite.config.ts` uses.
export const PAGE_PORT = Number(process.env.CW_PW_PORT ?? 5179);
export const PAGE_ORIGIN = `http://127.0.0.1:${PAGE_PORT}`;
