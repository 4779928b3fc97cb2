package kmeans_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// demo clusters the Riverton demo stations and names the features.
func demo() *kmeans.Model {
	_, x := bikeshare.Generate(300, 1)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 4, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 1}, nil)
	if err != nil {
		panic(err)
	}
	m, err := res.Model.WithFeatures(bikeshare.Features())
	if err != nil {
		panic(err)
	}
	return m.WithCreated(time.Date(2025, 3, 1, 9, 30, 0, 0, time.UTC))
}

// A model document carries its schema, creation time, training summary and
// a checksum; ReadModel refuses a document whose content was changed.
func ExampleReadModel() {
	doc, err := json.Marshal(demo())
	if err != nil {
		fmt.Println(err)
		return
	}
	m, err := kmeans.ReadModel(bytes.NewReader(doc), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.K(), m.Features()[0], m.Created().Format(time.RFC3339), m.Training().Rows)

	tampered := bytes.Replace(doc, []byte(`"trips_per_day"`), []byte(`"trips_per_week"`), 1)
	_, err = kmeans.ReadModel(bytes.NewReader(tampered), nil)
	fmt.Println(errors.Is(err, kmeans.ErrChecksum), errors.Is(err, kmeans.ErrModel))
	_, err = kmeans.ReadModel(bytes.NewReader(doc), &kmeans.DecodeLimits{MaxBytes: 100})
	fmt.Println(errors.Is(err, kmeans.ErrTooLarge))
	// Output:
	// 4 trips_per_day 2025-03-01T09:30:00Z 300
	// true true
	// true
}
