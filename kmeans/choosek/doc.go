// Package choosek helps choose the number of clusters of a k-means
// clustering: [Sweep] clusters the data once for every k of a range,
// gathers the evidence (internal validity indices, the knee of the cost
// curve, the gap statistic and resample stability) and recommends a k with
// its reasons; [MeasureStability] measures how well resamples reproduce
// the clusters of one clustering.
//
// # Scores
//
// Every criterion scores every swept k on the common scale [0, 1], 1 being
// the criterion's best swept k ([Standing].Scores):
//
//   - mean silhouette, Caliński–Harabasz, Dunn (higher is better):
//     (v − min)/(max − min) over the swept ks where the index is defined;
//   - Davies–Bouldin (lower is better): (max − v)/(max − min);
//   - knee: the bend of k below the chord of the cost curve
//     ([validate.KneeCurve] on the running minimum of the cost) divided by
//     the bend at the knee Kneedle finds ([validate.Knee]), clipped to
//     [0, 1]; no score at the first and last swept k, where the bend is 0
//     by construction, and none at all when Kneedle finds no knee;
//   - gap: with k̂ the k of the gap rule (the smallest k with Gap(k) ≥
//     Gap(k+1) − s_{k+1}, [validate.Gap]), 1 where Gap(k) ≥ Gap(k̂) and
//     (Gap(k) − min Gap)/(Gap(k̂) − min Gap) elsewhere; no score when the
//     gap is skipped or no swept k meets the rule.
//
// The internal indices are undefined at k = 1, and an index that was not
// computed (Dunn above Options.DunnRows) has no score. If all values of an
// index are equal they all score 1; an infinite value in the better
// direction (zero within-cluster spread) scores 1.
//
// # Recommendation rule
//
// The rule is a documented heuristic of this package, not a theorem. The
// criteria answer different questions (compact and separated clusters, a
// bend in the cost, more structure than a structureless reference), and
// the rule reports how far they agree instead of counting winners.
//
//  1. Combined score of a k ≥ 2 (Standing.Combined): the mean of the scores
//     defined at k. k = 1 has none: only the gap statistic can speak for it.
//  2. Admissible ks: k = 1; every k when stability is skipped; otherwise
//     the ks none of whose clusters is not reproduced, that is whose every
//     cluster has a mean Jaccard of at least 0.6 over the resamples
//     ([validate.ReadJaccard]; C. Hennig, "Cluster-wise assessment of
//     cluster stability", Computational Statistics & Data Analysis 52, 2007;
//     the thresholds are common practice attributed to that paper).
//  3. The candidate is the admissible k ≥ 2 with the best combined score,
//     ties going to the smaller k. If no k ≥ 2 is admissible, it is the k ≥ 2
//     with the best combined score, and the reasons say its clusters are
//     not reproduced.
//  4. The evidence for a k is clear (Recommendation.Clear) when its
//     combined score is at least 0.8, its mean silhouette at least 0.5
//     ("a reasonable structure", L. Kaufman and P. J. Rousseeuw, Finding
//     Groups in Data, 1990; common practice) and, when stability was
//     measured, every cluster is reproduced (mean Jaccard ≥ 0.75).
//  5. The recommendation is the candidate, except that it is k = 1 (no
//     cluster structure) when the gap rule picks k = 1 and the evidence for
//     the candidate is not clear, or when no k ≥ 2 has a combined score and
//     the gap rule picks k = 1. With no candidate and no gap rule, it is the
//     smallest swept k.
//
// Min–max scores are relative to the swept range: a criterion's worst k
// scores 0 however small the spread, so a noisy index (Dunn's depends on a
// single pair of rows) can pull a k down. That is why the combined score is
// read together with the per-criterion preferences, the absolute
// silhouette and the stability, and why Clear asks for all three.
//
// # Output
//
// [Result.WriteTo] prints the evidence per k, then the agreement per k: a
// bar of eight cells for the combined score (▇▇▇▇▇▇▁▁ 0.78), the criteria
// that rank the k first, ▶ at the recommended k and ✗ at ks that failed
// the stability check; then [Recommendation.String]: the recommended k
// with its combined score and whether the structure is clear, each
// criterion's preferred k, and a few sentences of reasons.
//
// # Reference data sets
//
// TestReferenceTable runs Sweep with default options and Settings{Seed: 1}
// on the shared reference sets (raw coordinates for the synthetic sets, z-scored
// features for iris, wine and seeds) and logs this table: the published number of
// clusters (or classes), the k each criterion ranks first (– for none) and
// the recommendation with its combined score and whether the evidence is
// clear.
//
//	set        ks     true k  silhouette  Davies–Bouldin  Calinski–Harabasz  Dunn  knee  gap  recommended
//	S1         1..20  15      15          15              15                 15    5     3    15 (0.90, clear)
//	S2         1..20  15      15          15              15                 15    4     3    15 (0.90, clear)
//	A1         1..30  20      20          20              20                 20    4     4    20 (0.91, clear)
//	Unbalance  1..20  8       2           4               8                  2     3     8    8 (0.81, clear)
//	iris       1..10  3       2           2               2                  2     3     3    2 (0.97, clear)
//	wine       1..10  3       3           3               3                  3     3     3    3 (1.00, weak)
//	seeds      1..10  3       2           2               2                  3     3     3    3 (0.89, weak)
//
// Sources of the true k: S1, S2 (P. Fränti and O. Virmajoki, Pattern
// Recognition 39, 2006), A1 (I. Kärkkäinen and P. Fränti, 2002), Unbalance
// (M. Rezaei and P. Fränti, IEEE TKDE 28, 2016); iris (R. A. Fisher 1936),
// wine and seeds (UCI) have 3 classes. S1, S2 (5000 rows) and Unbalance
// (6500) are above Options.SampleRows: their Dunn, stability and gap come
// from the 4000-row sample.
//
// What the table shows. On the synthetic sets of separated Gaussian
// clusters (S1, S2, A1, Unbalance) the recommendation is the published k
// with clear evidence, although no more than four criteria rank it first:
// the knee sits at the first, coarse bend of the cost, the gap rule stops
// at an early local maximum of Gap(k) on S1, S2 and A1, and on Unbalance
// (three clusters of 2000 rows and five of 100) the silhouette, Dunn and
// Davies–Bouldin prefer coarser partitions. Their scores still rate the
// published k high, which is what the combined score is for. On iris the
// indices prefer 2 (versicolor and virginica overlap; 2 and 3 are both
// defensible) and the rule follows them; wine and seeds get 3 with
// reproduced clusters, but a mean silhouette below 0.5 makes the evidence
// weak: the classes are real, the clusters overlap.
package choosek
