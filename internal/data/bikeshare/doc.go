// Package bikeshare generates the invented demo data of centroid's examples
// and tests: the docking stations of Riverton Bikes, a fictional city
// bike-share operator that wants to group its stations by how they are used.
//
// Nothing here is measured. Riverton, its stations and their numbers are made
// up by this package from a fixed seed; the profiles below are plausible
// guesses chosen so that clustering has something to find, not facts about
// any real city or operator.
//
// # Features
//
// Each station is described by six usage features in different units, in
// this column order (see Features, Units and Bounds):
//
//	column  name               unit       meaning                                      range
//	0       trips_per_day      trips/day  trips starting here, daily average            [1, 1500]
//	1       weekend_share      fraction   share of the week's trips on Sat and Sun      [0, 1]
//	2       peak_hour_ratio    fraction   share of trips in the 7–9 and 16–19 rushes    [0, 1]
//	3       mean_trip_minutes  minutes    mean length of trips starting here            [2, 180]
//	4       return_imbalance   bikes/day  bikes arriving minus bikes leaving, per day   [-60, 60]
//	5       elevation_m        m          height of the station above the river         [0, 500]
//
// Values are rounded as an operator's report would show them: trips and
// metres to whole numbers, fractions to three decimals, minutes and bikes to
// one decimal.
//
// # Station kinds
//
// Every station is drawn from one of five latent kinds (Kinds), in fixed
// proportions of the network:
//
//	kind                  share  profile (typical values)
//	commuter hub          20 %   ~300 trips, 13 % weekend, 56 % rush hours, 12 min, near the rail station
//	waterfront leisure    18 %   ~170 trips, 45 % weekend, 17 % rush hours, 32 min, at river level
//	university campus     17 %   ~220 trips, 16 % weekend, 32 % rush hours, 9 min, 65 m up
//	residential hillside  25 %   ~60 trips, 30 % weekend, 45 % rush hours, 16 min, 140 m up
//	old town              20 %   ~140 trips, 37 % weekend, 22 % rush hours, 24 min, 18 m up
//
// Counts, durations and elevations vary log-normally around the typical
// value, fractions logit-normally. Bikes drift downhill: return_imbalance
// falls by 0.06 bikes a day per metre of elevation above 30 m, so hillside
// stations lose bikes and the imbalance is correlated with elevation inside
// a kind. The kinds overlap (waterfront and old town most), so k-means on
// z-scored features recovers them well but not perfectly.
//
// Station.Kind records the kind a station was drawn from. It is ground truth
// for demos and tests (for example an adjusted Rand index against a
// clustering); it is not a feature.
//
// # Determinism
//
// Generate and NewStations draw from math/rand/v2 PCG generators seeded by
// their seed argument only: the same arguments give identical stations on
// every call.
package bikeshare
