// Command segment is centroid's main job end to end on invented demo data:
// Riverton Bikes, a fictional city bike-share operator, groups its docking
// stations by how they are used so that rebalancing crews, maintenance and
// pricing can be planned per group.
//
// It generates the stations deterministically, z-scores the six usage
// features (they come in trips, fractions, minutes, bikes and metres),
// sweeps k with choosek.Sweep (silhouette, Davies–Bouldin,
// Calinski–Harabasz, Dunn, the knee of the cost curve, the gap statistic
// and resample stability), takes the recommended k (or the one given with
// -k), profiles every cluster in original units, draws the evidence
// (indices.png, silhouette.png, pca.png in the output folder), saves the
// model as JSON, reloads it and labels a few proposed stations.
//
// Run it from the module root:
//
//	go run ./examples/segment
//	go run ./examples/segment -stations 400 -kmax 9 -out /tmp/segment -format svg
//
// The output folder defaults to out/segment; the report names every file
// it writes.
package main
