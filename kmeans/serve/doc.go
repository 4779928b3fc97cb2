// Package serve puts a fitted [kmeans.Model] to work in a service: rows
// given by feature name ([Record], [AssignRecord], [AssignMap], [Vector]),
// a [Holder] that swaps models under traffic, a [Drift] monitor that
// compares live traffic with the training data, and [Server], an HTTP API
// over all three.
//
// # HTTP API
//
// [NewServer] makes a [Server] for a model with feature names; mount
// [Server.Handler] on any mux, or start the *http.Server of
// [Server.HTTPServer], which also applies the header limit and the
// timeouts. Every response, errors included, is JSON.
//
//	POST /v1/assign   {"rows":[{"trips_per_day":212,"weekend_share":0.19,...},...]}
//	                  → {"model":"sha256:…","assignments":[{"cluster":2,"distance":0.83,"margin":0.41},...]}
//	GET  /v1/model    the model document (version 2), ETag = its checksum; 304 for a matching If-None-Match
//	PUT  /v1/model    install a new model document with the same features, atomically
//	                  (only with an admin token, see below; otherwise 403)
//	GET  /v1/drift    population stability index, share beyond the training p99, rejections
//	GET  /healthz     liveness, the served model's checksum, k and features
//	GET  /debug/vars  the server's own counters (Stats), under "service"; nothing else of the process
//
// Each row of /v1/assign is an object with exactly the model's feature
// names, in any order, and finite numbers; margin is the distance to the
// runner-up minus the distance, null when there is no runner-up to
// measure. The whole batch is refused at the first problem, read front to
// back: 400 malformed JSON or a body not of that shape, 413 a body over
// the limit or a row more than the row limit, 422 a row that is not an
// object, has a missing, unknown or repeated field, a value that is not a
// number or not finite, or that the model cannot label (a distance that
// overflows: problem "not finite"); a 422 names the row, and the field and
// problem when there is one. The other errors: 401 PUT without the right
// token, 403 PUT when swaps are disabled, 404 unknown path or no training
// summary for /v1/drift, 405 wrong method, 408 a body that did not arrive
// within the read timeout, 409 a model with other features, 415 a body
// not declared application/json, 422 an invalid model document, 431
// headers over the limit, 500 a panic (logged, the connection kept).
//
// # Model swaps
//
// Changing the model is closed unless configured open: with no
// [Options.AdminToken] (the default) PUT /v1/model answers 403 and only
// the program itself can swap ([Server.Swap]). With a token, PUT needs it
// as "Authorization: Bearer <token>"; the server keeps only its SHA-256,
// compares in constant time, and never writes it to a response or a log.
// Take the token from the environment or a file, never from a
// command-line flag. A refused swap leaves the old model serving.
//
// # Limits
//
// Every limit has a default ([Limits]; zero means the default):
//
//	POST /v1/assign body      1 MiB                 (Limits.MaxBody, 413)
//	rows per request          as many as fit        (Limits.MaxRows, 413): (MaxBody − 11) / max(128, shortest row + 1),
//	                                                 8191 for the demo stations
//	PUT /v1/model document    16 MiB, 2²⁰ values k·d (Limits.MaxModelBytes, MaxModelValues, 413)
//	request line and headers  64 KiB                (Limits.MaxHeaderBytes, 431)
//	reading the headers       5 s                   (Limits.ReadHeaderTimeout, connection closed)
//	reading the request       15 s                  (Limits.ReadTimeout, 408)
//	writing the response      30 s                  (Limits.WriteTimeout)
//	idle keep-alive           2 min                 (Limits.IdleTimeout)
//
// A request body is read whole, within its limit, then decoded in one
// pass that labels each row as it is read and keeps 24 bytes per row:
// one request allocates less than 4 × MaxBody in all, whatever the body
// holds. GET /v1/model encodes each installed model once
// ([Served.Document]), however many clients fetch it.
//
// # Concurrency
//
// Model, Holder, Drift and Server are safe for concurrent use by multiple
// goroutines. Each request loads the served model once (one atomic load)
// and answers every row of its batch with that model, whose checksum it
// reports; a swap publishes a new model atomically, so a request sees the
// old or the new model, never a mix. AssignRecord and AssignMap allocate
// nothing for models of up to 64 features, and neither does decoding a
// request per row.
//
// # Finiteness
//
// Every serving call checks its numbers as [kmeans.Model.Assign] does: a
// NaN or ±Inf value, a value that becomes infinite after scaling, or a
// row whose distance to every center overflows is refused with an error
// wrapping [kmeans.ErrNotFinite] (a [FieldError] with FieldNotFinite when
// the value itself is not finite); no response holds NaN or ±Inf.
package serve
