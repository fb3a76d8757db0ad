// nmrcalc service worker: caches every file of the site at install (bypassing the HTTP cache,
// so a new build never mixes with an old one) so the page works offline afterwards; answers
// from the cache first. A new build waits until the page asks it to take over ("skip-waiting",
// after the user chose to reload), so an open page never runs half old, half new files.
"use strict";
const CACHE = @CACHE@;
const FILES = @FILES@;

self.addEventListener("install", (event) => {
  event.waitUntil(caches.open(CACHE).then((cache) => cache.addAll(FILES.map((file) => new Request(file, { cache: "reload" })))));
});

self.addEventListener("message", (event) => {
  if (event.data === "skip-waiting") self.skipWaiting();
});

self.addEventListener("activate", (event) => {
  event.waitUntil(
    caches.keys()
      .then((keys) => Promise.all(keys.filter((key) => key.startsWith("nmrcalc-") && key !== CACHE).map((key) => caches.delete(key))))
      .then(() => self.clients.claim()),
  );
});

self.addEventListener("fetch", (event) => {
  if (event.request.method !== "GET") return;
  event.respondWith(
    caches.open(CACHE).then((cache) => cache.match(event.request, { ignoreSearch: true }).then((hit) => hit || fetch(event.request))),
  );
});
