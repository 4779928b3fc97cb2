// Package dataset reads the shared reference datasets that centroid's tests
// check against. The files are not part of the module: they live in the
// folder named by the CENTROID_DATASETS environment variable, by default
// ../shared/datasets relative to the module root. See PROVENANCE.md in that
// folder for sources and ground truth.
package reference
