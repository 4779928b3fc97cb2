package stream_test

import "github.com/centroidlab/centroid/distance"

var (
	cosineMetric    distance.Metric = distance.Cosine{}
	manhattanMetric distance.Metric = distance.Manhattan{}
)
