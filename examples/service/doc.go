// Command service serves a k-means model over HTTP: Riverton Bikes, the
// fictional bike-share operator of the demo data, labels docking stations
// by name-keyed usage features as they arrive, replaces the model without a
// restart and watches its traffic drift away from the training data.
//
// The HTTP API is package serve's Server (see its documentation for the
// endpoints, errors and limits); this command only wires flags to it. It
// starts with a model fitted on the demo stations (internal/data/bikeshare,
// z-scored, k = 5), or with a model document given by -model (which must
// name its features), and listens on -addr, by default 127.0.0.1:8080, a
// loopback address that only this machine reaches:
//
//	go run ./examples/service
//	go run ./examples/service -model model.json -addr 127.0.0.1:9090
//
// # Model swaps and the admin token
//
// PUT /v1/model replaces the model only if the service has an admin token,
// read from the environment variable SERVICE_ADMIN_TOKEN or from the file
// named by -admin-token-file (one line; readable by the service only). The
// token is never a flag, since any user of the machine can read a
// process's command line, and never appears in a response or a log. With
// no token (the default) every PUT is answered 403. The startup log line
// "serving" says which mode is in force, and a warning follows when -addr
// is not a loopback address:
//
//	SERVICE_ADMIN_TOKEN=$(cat /run/secrets/model-token) go run ./examples/service
//	go run ./examples/service -admin-token-file /run/secrets/model-token
//
// # Limits
//
// -max-body and -max-rows bound POST /v1/assign (1 MiB; rows: as many as
// fit, see serve.Limits), -max-model-bytes and -max-model-values the
// -model file and PUT /v1/model (16 MiB, 2²⁰ values); the header limit and
// the timeouts are the serve defaults. The service logs every request with
// log/slog as JSON on stderr and shuts down gracefully on SIGINT or
// SIGTERM, letting requests in flight finish.
package main
