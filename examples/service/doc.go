// Command service serves a k-means model over HTTP: Riverton Bikes, the
// fictional bike-share operator of the demo data, labels docking stations
// by name-keyed usage features as they arrive, replaces the model without a
// restart and watches its traffic drift away from the training data.
//
// It starts with a model fitted on the demo stations (internal/bikeshare,
// z-scored, k = 5), or with a model document given by -model, and listens
// on -addr (default 127.0.0.1:8080):
//
//	go run ./examples/service
//	go run ./examples/service -addr :8080 -model model.json -admin-token s3cret
//
// # Endpoints
//
//	POST /v1/assign   {"rows":[{"trips_per_day":212,"weekend_share":0.19,...},...]}
//	                  → {"model":"sha256:…","assignments":[{"cluster":2,"distance":0.83,"margin":0.41},...]}
//	GET  /v1/model    the model document (version 2 JSON), ETag = its checksum
//	PUT  /v1/model    install a new model document (same feature names), atomically
//	GET  /v1/drift    population stability index, share beyond the training p99, rejections
//	GET  /healthz     liveness and the served model's checksum
//	GET  /debug/vars  expvar counters (requests, rows, rejections, swaps)
//
// Each row of /v1/assign is an object with exactly the model's feature
// names; the whole batch is refused (422, naming the row and field) if a
// row has a missing, unknown or repeated field or a non-finite value.
// Errors are JSON objects {"error":"…"} with a 4xx status: 400 malformed
// JSON, 401 missing admin token, 404 unknown path, 405 wrong method, 409 a
// model with different features, 413 body or batch too large, 415 not
// application/json, 422 rows that do not match the schema or an invalid
// model document. A refused PUT leaves the old model serving.
//
// The server limits request bodies (-max-body, -max-model-bytes) and rows
// per request (-max-rows), sets read and write timeouts, logs every request
// with log/slog as JSON on stderr and shuts down gracefully on SIGINT or
// SIGTERM, letting requests in flight finish.
package main
