// Varroute's service worker for the crew's screens: they keep working with no signal.
// Pages and data under /crew: network first, the last copy when offline. Built assets:
// cache first (their names change with every build). Yard photos: the last copy first,
// refreshed in the background. Nothing else is touched.
const PAGES = "varroute-crew-pages-v1";
const ASSETS = "varroute-crew-assets-v1";

self.addEventListener("install", () => self.skipWaiting());
self.addEventListener("activate", (event) => event.waitUntil(self.clients.claim()));

async function networkFirst(request) {
  const cache = await caches.open(PAGES);
  try {
    const response = await fetch(request);
    if (response.ok) await cache.put(request, response.clone());
    return response;
  } catch (error) {
    const cached = await cache.match(request);
    if (cached) return cached;
    if (request.mode === "navigate") {
      const home = await cache.match("/crew");
      if (home) return home;
    }
    throw error;
  }
}

async function cacheFirst(request) {
  const cache = await caches.open(ASSETS);
  const cached = await cache.match(request);
  if (cached) return cached;
  const response = await fetch(request);
  if (response.ok) await cache.put(request, response.clone());
  return response;
}

async function staleWhileRevalidate(request) {
  const cache = await caches.open(ASSETS);
  const cached = await cache.match(request);
  const fresh = fetch(request)
    .then((response) => {
      if (response.ok) cache.put(request, response.clone());
      return response;
    })
    .catch(() => cached);
  return cached ?? fresh;
}

// The page asks for itself and what it loaded to be kept, so the first visit already works
// offline (the worker did not yet control the page while it loaded).
self.addEventListener("message", (event) => {
  if (event.data?.type !== "keep" || !Array.isArray(event.data.urls)) return;
  event.waitUntil(
    Promise.all(
      event.data.urls.map(async (href) => {
        const url = new URL(href, self.location.origin);
        if (url.origin !== self.location.origin) return;
        const crew = url.pathname === "/crew" || url.pathname.startsWith("/crew/");
        const cache = await caches.open(crew ? PAGES : ASSETS);
        if (await cache.match(url.href)) return;
        try {
          const response = await fetch(url.href, { credentials: "same-origin" });
          if (response.ok) await cache.put(url.href, response);
        } catch {
          // offline already: nothing to keep
        }
      }),
    ),
  );
});

self.addEventListener("fetch", (event) => {
  const request = event.request;
  if (request.method !== "GET") return;
  const url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  if (url.pathname === "/crew" || url.pathname.startsWith("/crew/") || url.pathname.startsWith("/crew.data")) {
    event.respondWith(networkFirst(request));
  } else if (url.pathname.startsWith("/assets/") || url.pathname === "/favicon.svg") {
    event.respondWith(cacheFirst(request));
  } else if (url.pathname.startsWith("/api/attachments/")) {
    event.respondWith(staleWhileRevalidate(request));
  }
});
