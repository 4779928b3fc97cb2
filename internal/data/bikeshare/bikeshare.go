package bikeshare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Operator is the name of the fictional bike-share operator.
const Operator = "Riverton Bikes"

// Columns of Station.Features and of the matrix returned by Generate.
const (
	TripsPerDay     = iota // trips starting at the station, daily average (trips/day)
	WeekendShare           // share of the week's trips on Saturday and Sunday (fraction)
	PeakHourRatio          // share of trips in the morning and evening rushes (fraction)
	MeanTripMinutes        // mean length of trips starting here (minutes)
	ReturnImbalance        // bikes arriving minus bikes leaving, per day (bikes/day)
	ElevationM             // height above the river (metres)
	NumFeatures            // number of features
)

// Latent station kinds, the values of Station.Kind.
const (
	CommuterHub = iota // near the rail station, weekday rush traffic
	Waterfront         // river promenade, long weekend rides
	Campus             // university, many short trips between buildings
	Hillside           // residential streets up the hill, few trips, bikes drift away
	OldTown            // tourist center, mixed leisure traffic
	NumKinds           // number of kinds
)

// Station is one docking station of the network.
type Station struct {
	// ID is a stable identifier, "RB-001" onwards for Generate and
	// "RB-N01" onwards for NewStations.
	ID string
	// Name is a made-up street name, unique within one call.
	Name string
	// Features holds the NumFeatures usage features in column order
	// (TripsPerDay, ..., ElevationM). It is the station's own slice, not
	// shared with other stations or with the matrix from Generate.
	Features []float64
	// Kind is the latent kind the station was generated from, an index
	// into Kinds(). It is ground truth for demos and tests, not a feature.
	Kind int
}

var (
	featureNames = [NumFeatures]string{"trips_per_day", "weekend_share", "peak_hour_ratio", "mean_trip_minutes", "return_imbalance", "elevation_m"}
	featureUnits = [NumFeatures]string{"trips/day", "fraction", "fraction", "minutes", "bikes/day", "m"}
	lowerBounds  = [NumFeatures]float64{1, 0, 0, 2, -60, 0}
	upperBounds  = [NumFeatures]float64{1500, 1, 1, 180, 60, 500}
	// roundTo is the number of decimals each feature is reported with.
	roundTo = [NumFeatures]int{0, 3, 3, 1, 1, 0}
)

// Features returns the feature names in column order, such as
// "trips_per_day". The slice is new on every call.
func Features() []string { return slices.Clone(featureNames[:]) }

// Units returns the unit of each feature in column order, such as
// "trips/day". The slice is new on every call.
func Units() []string { return slices.Clone(featureUnits[:]) }

// Bounds returns the smallest and largest value each feature can take, in
// column order. Every generated value lies in [lo[j], hi[j]]. The slices are
// new on every call.
func Bounds() (lo, hi []float64) {
	return slices.Clone(lowerBounds[:]), slices.Clone(upperBounds[:])
}

// profile describes one latent kind: the typical value of each feature and
// how much stations of the kind vary around it.
type profile struct {
	name   string
	share  float64  // share of the network's stations
	places []string // street names for stations of this kind
	// Typical values and spreads: trips, minutes and elevation vary
	// log-normally (spread on the log scale), the fractions logit-normally
	// (spread on the logit scale), the imbalance normally (spread = sd).
	trips, tripsSpread         float64
	weekend, weekendSpread     float64
	peak, peakSpread           float64
	minutes, minutesSpread     float64
	imbalance, imbalanceSpread float64
	elevation, elevationSpread float64
}

// downhillDrift is how many bikes a day a station loses per metre above
// driftBase: riders take bikes down the hill and seldom ride them back up.
const (
	downhillDrift = 0.06
	driftBase     = 30.0
)

var profiles = [NumKinds]profile{
	CommuterHub: {
		name: "commuter hub", share: 0.20,
		places: []string{"Central Station", "North Rail Halt", "Depot Square", "Union Platform", "Signal Yard"},
		trips:  300, tripsSpread: 0.25, weekend: 0.13, weekendSpread: 0.3, peak: 0.56, peakSpread: 0.25,
		minutes: 12, minutesSpread: 0.2, imbalance: 4, imbalanceSpread: 4, elevation: 20, elevationSpread: 0.4,
	},
	Waterfront: {
		name: "waterfront leisure", share: 0.18,
		places: []string{"Pier", "Boardwalk", "Harbour Steps", "Lighthouse Quay", "Marina"},
		trips:  170, tripsSpread: 0.3, weekend: 0.45, weekendSpread: 0.3, peak: 0.17, peakSpread: 0.3,
		minutes: 32, minutesSpread: 0.25, imbalance: 3, imbalanceSpread: 4, elevation: 5, elevationSpread: 0.5,
	},
	Campus: {
		name: "university campus", share: 0.17,
		places: []string{"Library Lawn", "Science Quad", "Student Union", "Engineering Yard", "Residence Halls"},
		trips:  220, tripsSpread: 0.3, weekend: 0.16, weekendSpread: 0.3, peak: 0.32, peakSpread: 0.3,
		minutes: 9, minutesSpread: 0.2, imbalance: 0, imbalanceSpread: 4, elevation: 65, elevationSpread: 0.3,
	},
	Hillside: {
		name: "residential hillside", share: 0.25,
		places: []string{"Ridge Road", "Summit Lane", "Oak Terrace", "High Meadow", "Quarry Hill"},
		trips:  60, tripsSpread: 0.4, weekend: 0.30, weekendSpread: 0.3, peak: 0.45, peakSpread: 0.3,
		minutes: 16, minutesSpread: 0.25, imbalance: -4, imbalanceSpread: 3, elevation: 140, elevationSpread: 0.25,
	},
	OldTown: {
		name: "old town", share: 0.20,
		places: []string{"Old Market", "Cathedral Square", "Museum Row", "Town Hall", "Clock Tower"},
		trips:  140, tripsSpread: 0.3, weekend: 0.37, weekendSpread: 0.3, peak: 0.22, peakSpread: 0.3,
		minutes: 24, minutesSpread: 0.25, imbalance: 2, imbalanceSpread: 4, elevation: 18, elevationSpread: 0.45,
	},
}

// Kinds returns the names of the latent station kinds, indexed by
// Station.Kind (CommuterHub, ..., OldTown). The slice is new on every call.
func Kinds() []string {
	names := make([]string, NumKinds)
	for k, p := range profiles {
		names[k] = p.name
	}
	return names
}

// KindsOf returns the Kind of each station, in order: the ground-truth
// grouping to compare a clustering with.
func KindsOf(stations []Station) []int {
	kinds := make([]int, len(stations))
	for i, s := range stations {
		kinds[i] = s.Kind
	}
	return kinds
}

// Streams of the PCG generator, so that Generate and NewStations with the
// same seed do not produce the same stations.
const (
	streamNetwork  = 0x5269766572746f6e // "Riverton"
	streamProposed = 0x4e65775374617473 // "NewStats"
)

// Generate returns n stations of the Riverton network and the n×NumFeatures
// matrix of their features, row i holding stations[i].Features (copied, not
// shared). The kinds appear in their documented shares, rounded so that
// they sum to n (every kind is present once n ≥ NumKinds), in a shuffled order.
// The result depends only on n and seed. It panics if n < 1.
func Generate(n int, seed uint64) ([]Station, *mat.Dense) {
	if n < 1 {
		panic(fmt.Sprintf("bikeshare: Generate needs n ≥ 1, got %d", n))
	}
	rnd := rand.New(rand.NewPCG(seed, streamNetwork))
	kinds := kindCounts(n)
	order := make([]int, 0, n)
	for k, c := range kinds {
		for range c {
			order = append(order, k)
		}
	}
	rnd.Shuffle(n, func(i, j int) { order[i], order[j] = order[j], order[i] })

	g := newGenerator(rnd, "")
	stations := make([]Station, n)
	data := mat.NewDense(n, NumFeatures, nil)
	for i, k := range order {
		stations[i] = g.station(fmt.Sprintf("RB-%03d", i+1), k)
		data.SetRow(i, stations[i].Features)
	}
	return stations, data
}

// NewStations returns m stations that are not part of the network from
// Generate: proposed sites whose kinds are drawn at random with the
// documented shares, to be placed into an existing clustering. The result
// depends only on m and seed. It panics if m < 0.
func NewStations(m int, seed uint64) []Station {
	if m < 0 {
		panic(fmt.Sprintf("bikeshare: NewStations needs m ≥ 0, got %d", m))
	}
	rnd := rand.New(rand.NewPCG(seed, streamProposed))
	g := newGenerator(rnd, " (new)")
	stations := make([]Station, m)
	for i := range stations {
		u := rnd.Float64()
		k := 0
		for ; k < NumKinds-1 && u >= profiles[k].share; k++ {
			u -= profiles[k].share
		}
		stations[i] = g.station(fmt.Sprintf("RB-N%02d", i+1), k)
	}
	return stations
}

// kindCounts splits n stations over the kinds by their shares with the
// largest-remainder method, ties going to the lower kind.
func kindCounts(n int) [NumKinds]int {
	var counts [NumKinds]int
	var rest [NumKinds]float64
	left := n
	for k, p := range profiles {
		exact := float64(n) * p.share
		counts[k] = int(exact)
		rest[k] = exact - float64(counts[k])
		left -= counts[k]
	}
	for ; left > 0; left-- {
		best := 0
		for k := range rest {
			if rest[k] > rest[best] {
				best = k
			}
		}
		counts[best]++
		rest[best] = -1
	}
	return counts
}

// generator draws stations and gives them unique names.
type generator struct {
	rnd    *rand.Rand
	suffix string
	used   map[string]int
}

func newGenerator(rnd *rand.Rand, suffix string) *generator {
	return &generator{rnd: rnd, suffix: suffix, used: map[string]int{}}
}

// station draws one station of kind k.
func (g *generator) station(id string, k int) Station {
	p := &profiles[k]
	place := p.places[g.rnd.IntN(len(p.places))]
	g.used[place]++
	name := fmt.Sprintf("%s %d%s", place, g.used[place], g.suffix)

	f := make([]float64, NumFeatures)
	f[TripsPerDay] = g.logNormal(p.trips, p.tripsSpread)
	f[WeekendShare] = g.logitNormal(p.weekend, p.weekendSpread)
	f[PeakHourRatio] = g.logitNormal(p.peak, p.peakSpread)
	f[MeanTripMinutes] = g.logNormal(p.minutes, p.minutesSpread)
	f[ElevationM] = g.logNormal(p.elevation, p.elevationSpread)
	f[ReturnImbalance] = p.imbalance - downhillDrift*(f[ElevationM]-driftBase) + p.imbalanceSpread*g.rnd.NormFloat64()
	for j := range f {
		f[j] = report(f[j], j)
	}
	return Station{ID: id, Name: name, Features: f, Kind: k}
}

// logNormal returns median·exp(spread·z) for a standard normal z.
func (g *generator) logNormal(median, spread float64) float64 {
	return median * math.Exp(spread*g.rnd.NormFloat64())
}

// logitNormal returns the fraction whose logit is logit(median) + spread·z
// for a standard normal z.
func (g *generator) logitNormal(median, spread float64) float64 {
	t := math.Log(median/(1-median)) + spread*g.rnd.NormFloat64()
	return 1 / (1 + math.Exp(-t))
}

// report clamps v to the bounds of feature j and rounds it to the decimals
// the feature is reported with.
func report(v float64, j int) float64 {
	scale := math.Pow(10, float64(roundTo[j]))
	v = math.Round(v*scale) / scale
	return math.Min(math.Max(v, lowerBounds[j]), upperBounds[j])
}
