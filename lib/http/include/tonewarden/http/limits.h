// Every limit of the HTTP server as a named constant with its unit, in one place, so that
// the OpenAPI document, the validators and the tests all read the same numbers.
#pragma once

#include <cstddef>
#include <cstdint>

namespace tonewarden::http {

// --- Connections and threads ---
inline constexpr int kDefaultPort = 8377;                  // TCP port when the config names none
// A kept-alive connection holds a pool thread between its requests, so the pool must exceed the
// connections a normal deployment keeps open (dashboards, scrapers, scripts); beyond it, new
// connections queue until one closes.
inline constexpr size_t kRequestWorkerThreads = 32;        // pool threads for ordinary requests
inline constexpr size_t kDefaultMaxEventStreams = 8;       // open SSE streams (one thread each)
inline constexpr size_t kMaxMaxEventStreams = 64;          // upper bound for that setting
inline constexpr int kReadTimeoutS = 5;                    // per socket read, seconds
inline constexpr int kWriteTimeoutS = 5;                   // per socket write, seconds
inline constexpr int kKeepAliveTimeoutS = 2;     // idle keep-alive connection (bounds stop()), s
inline constexpr size_t kKeepAliveMaxRequests = 100;  // per connection, then it closes (fairness)
inline constexpr size_t kMaxPayloadBytes = 64 * 1024;      // request body; beyond it: 413
inline constexpr int kStartTimeoutMs = 2000;               // start() waits this long for listen

// --- Authentication ---
inline constexpr size_t kMinTokenChars = 16;               // shorter bearer tokens are refused
inline constexpr size_t kMaxTokenChars = 4096;             // longer ones too (and token files)

// --- Event stream (Server-Sent Events) ---
inline constexpr size_t kEventQueueCapacity = 256;         // events queued per client
inline constexpr int kEventHeartbeatS = 15;                // comment line when idle, seconds
inline constexpr int kEventRetryMs = 3000;                 // reconnect delay told to clients

// --- Query parameters ---
inline constexpr size_t kMinSpectrumPoints = 2;            // ?points= for live spectra
inline constexpr size_t kMaxSpectrumPoints = 65536;
inline constexpr size_t kDefaultSpectrumPoints = 1024;
// Spectrogram history: rows kept per channel and points (frequency buckets) per row. The
// daemon keeps every row at kMaxSpectrogramPoints; a request may ask for fewer of either.
inline constexpr size_t kMaxSpectrogramRows = 600;         // ?rows= (and the history's depth)
inline constexpr size_t kDefaultSpectrogramRows = 120;
inline constexpr size_t kMinSpectrogramPoints = 2;         // ?points= for spectrogram rows
inline constexpr size_t kMaxSpectrogramPoints = 1024;
inline constexpr size_t kDefaultSpectrogramPoints = 1024;
inline constexpr size_t kMinTrendPoints = 2;               // ?points= for trends
inline constexpr size_t kMaxTrendPoints = 10000;
inline constexpr size_t kDefaultTrendPoints = 1000;
inline constexpr size_t kMaxTrendSeries = 16;              // series per trend request
inline constexpr int64_t kDefaultTrendSpanMs = 3600 * 1000;  // trend window when from is absent
inline constexpr size_t kMaxListLimit = 10000;             // ?limit= on events/snapshots/notes
inline constexpr size_t kDefaultListLimit = 500;
inline constexpr int64_t kDefaultHistorySpanMs = 24LL * 3600 * 1000;  // lists without from

// --- Request bodies ---
inline constexpr size_t kMaxUserChars = 64;                // "user" of acknowledge/shelve/notes
inline constexpr size_t kMaxCommentChars = 1000;           // "comment" of acknowledge/shelve
inline constexpr size_t kMaxAnnotationChars = 2000;        // "text" of an annotation
inline constexpr int64_t kMinShelveS = 60;                 // shelve duration, seconds
inline constexpr int64_t kMaxShelveS = 7 * 24 * 3600;      // one week

}  // namespace tonewarden::http
