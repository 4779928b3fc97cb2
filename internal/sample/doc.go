// Package sample draws random subsets of row indices for the packages that
// resample data (validate's sampled silhouette, kmeans' stability).
package sample
