package kmeans

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"
	"io"
	"math"
	"strconv"
	"sync"
	"time"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
)

// LibraryVersion is the version of this library. Models made by Cluster
// record it, and their documents carry it in the "library" field.
const LibraryVersion = "0.1.0"

// Model documents: format name and the version MarshalJSON writes.
// Decoding reads versions 1 and 2.
const (
	modelFormat  = "centroid/kmeans-model"
	ModelVersion = 2 // version written by MarshalJSON
)

// Default decoding limits (see DecodeLimits).
const (
	DefaultMaxModelBytes  = 64 << 20 // 64 MiB
	DefaultMaxModelValues = 1 << 22  // k·d; 4 Mi values, 32 MiB of centers
)

// Limits on names stored in a document.
const (
	// MaxFeatureName is the longest feature name accepted, in bytes.
	MaxFeatureName = 256
	maxLibraryName = 64
)

// DecodeLimits bound the size of a model document that ReadModel accepts,
// so that a service can read documents from untrusted sources. The zero
// value means the defaults.
//
// Within them, decoding a document costs memory and time in proportion to
// its size, whatever it holds: arrays are held to the declared k and dim
// while they are read (see ReadModel), so a document that disagrees with
// its own shape is refused before anything is stored in proportion to its
// arrays.
type DecodeLimits struct {
	// MaxBytes is the largest document in bytes. Zero or negative means
	// DefaultMaxModelBytes; math.MaxInt64 means no limit.
	MaxBytes int64
	// MaxValues is the largest number of center values k·d, which bounds
	// the decoded model's memory (a few times 8·k·d bytes with its serving
	// index). Zero or negative means DefaultMaxModelValues; values above
	// MaxServedValues mean MaxServedValues.
	MaxValues int
}

func (l *DecodeLimits) resolved() DecodeLimits {
	var r DecodeLimits
	if l != nil {
		r = *l
	}
	if r.MaxBytes <= 0 {
		r.MaxBytes = DefaultMaxModelBytes
	}
	if r.MaxValues <= 0 {
		r.MaxValues = DefaultMaxModelValues
	}
	r.MaxValues = min(r.MaxValues, MaxServedValues)
	return r
}

// ReadModel reads one model document of version 1 or 2 from r, within the
// limits lim (nil means the defaults), and returns the decoded Model. It
// reads at most lim.MaxBytes+1 bytes.
//
// It checks everything: the format name and a known version; the syntax
// (RFC 8259, with strings in valid UTF-8 and no lone surrogate escapes,
// nothing after the document, containers nested at most 8 deep); member
// names exactly as written by MarshalJSON (case-sensitive, without
// escapes), each at most once per object, and no others; no null but for
// the scaler; a known metric with a center rule; k ≥ 1, dim ≥ 1 and k·dim
// within lim.MaxValues; exactly k centers of dim numbers each, all finite
// (unit length under Cosine); a valid scaler of dim columns. For version 2
// also the feature names (dim of them, see Model.WithFeatures), the library
// version, an RFC 3339 creation time in UTC, a consistent training summary
// (all members present, one entry per cluster, sizes adding up to rows,
// finite non-negative values, ordered quantiles) and the checksum (see
// MarshalJSON). Members may come in any order: arrays are held to the
// declared k and dim while they are read, wherever k and dim appear, so a
// refused document costs memory and time in proportion to its size.
//
// Every problem returns an error wrapping ErrModel; ErrTooLarge,
// ErrChecksum, ErrVersion and ErrSchema single out the size, integrity,
// version and feature-name failures.
func ReadModel(r io.Reader, lim *DecodeLimits) (*Model, error) {
	l := lim.resolved()
	n := l.MaxBytes
	if n < math.MaxInt64 {
		n++ // one byte more than allowed tells a document that is too large
	}
	b, err := readAtMost(r, n)
	if err != nil {
		return nil, fmt.Errorf("%w: reading: %w", ErrModel, err)
	}
	return decodeModel(b, l)
}

// readAtMost reads r to its end, or to n bytes. A reader that tells how
// much it holds (a bytes.Reader, strings.Reader or bytes.Buffer) is read
// into a slice of that size, once; any other into growing pieces
// (io.ReadAll), which allocates about twice what it reads.
func readAtMost(r io.Reader, n int64) ([]byte, error) {
	lr := io.LimitReader(r, n)
	sized, ok := r.(interface{ Len() int })
	if !ok {
		return io.ReadAll(lr)
	}
	b := make([]byte, min(int64(max(sized.Len(), 0)), n))
	if _, err := io.ReadFull(lr, b); err != nil {
		return nil, err
	}
	rest, err := io.ReadAll(lr) // empty unless Len was short
	if len(rest) > 0 {
		b = append(b, rest...)
	}
	return b, err
}

// digest caches a model's checksum; it is computed at most once.
type digest struct {
	once sync.Once
	sum  string
	err  error
}

// Checksum returns the checksum of the model's canonical document,
// "sha256:" followed by 64 lowercase hexadecimal digits: the value
// MarshalJSON writes in the "checksum" field. It returns an error wrapping
// ErrModel if the model cannot be encoded (zero Model, or a scaler type
// that package scale cannot encode).
func (m *Model) Checksum() (string, error) {
	if m == nil || m.k == 0 {
		return "", fmt.Errorf("%w: model has no centers", ErrModel)
	}
	m.digest.once.Do(func() {
		h := sha256.New()
		if _, err := m.encode(h, ""); err != nil {
			m.digest.err = err
			return
		}
		m.digest.sum = checksumPrefix + hex.EncodeToString(h.Sum(nil))
	})
	return m.digest.sum, m.digest.err
}

const checksumPrefix = "sha256:"

// MarshalJSON encodes the model as a version 2 document:
//
//	{"format":"centroid/kmeans-model","version":2,"library":"0.1.0",
//	 "created":"2025-03-01T09:30:00Z","metric":"euclidean","k":5,"dim":6,
//	 "features":["trips_per_day",...],"scaler":{...}|null,
//	 "centers":[[...],...],"training":{"rows":500,"clusters":[{"size":98,
//	 "weight":98,"cost":41.2,"p50":0.61,"p90":1.02,"p99":1.57,"max":1.74},...]},
//	 "checksum":"sha256:..."}
//
// The centers are in the clustering space (exact); created, features and
// training are omitted when the model has none. The checksum is SHA-256
// over the canonical encoding: this same document, compact, with its
// members in the order above and "checksum":"" (see Checksum); strings as
// encoding/json writes them, numbers in the shortest form that parses back
// to the same bits (exponent form below 1e-6 and from 1e21 on, as
// JavaScript writes numbers). A reader re-encodes what it decoded the same
// way, so reformatting a document (indentation, member order, number
// spelling) keeps it valid, while any change of content does not.
func (m *Model) MarshalJSON() ([]byte, error) {
	sum, err := m.Checksum()
	if err != nil {
		return nil, err
	}
	return m.encode(nil, sum)
}

// spillSize is how much of the document encode gathers before it writes
// to its writer.
const spillSize = 32 << 10

// encode writes the version 2 document of m with the checksum sum (empty
// for the canonical encoding). With w nil it returns the whole document;
// otherwise it writes it to w in pieces of about spillSize bytes, so that
// hashing a large model needs no copy of its document, and returns nil.
func (m *Model) encode(w hash.Hash, sum string) ([]byte, error) {
	sc, err := scale.Encode(m.scaler)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	head := docHead{Format: modelFormat, Version: ModelVersion, Library: m.library,
		Metric: m.metric.Name(), K: m.k, Dim: m.d, Features: m.features, Scaler: sc}
	if !m.created.IsZero() {
		head.Created = m.created.Format(time.RFC3339Nano)
	}
	b, err := json.Marshal(head)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	b = b[:len(b)-1] // the closing brace; the document goes on
	spill := func() {
		if w != nil && len(b) >= spillSize {
			w.Write(b)
			b = b[:0]
		}
	}
	b = append(b, `,"centers":[`...)
	for j := range m.k {
		if j > 0 {
			b = append(b, ',')
		}
		b = append(b, '[')
		for i, v := range m.centers[j*m.d : (j+1)*m.d] {
			if i > 0 {
				b = append(b, ',')
			}
			if b, err = appendNumber(b, v); err != nil {
				return nil, err
			}
			spill()
		}
		b = append(b, ']')
	}
	b = append(b, ']')
	if t := m.training; t != nil {
		b = append(b, `,"training":{"rows":`...)
		b = strconv.AppendInt(b, int64(t.Rows), 10)
		b = append(b, `,"clusters":[`...)
		for j, c := range t.Clusters {
			if j > 0 {
				b = append(b, ',')
			}
			b = append(b, `{"size":`...)
			b = strconv.AppendInt(b, int64(c.Size), 10)
			q := c.Distances
			for f, v := range [...]float64{c.Weight, c.Cost, q.P50, q.P90, q.P99, q.Max} {
				b = append(b, ',', '"')
				b = append(b, clusterMembers[f+1]...)
				b = append(b, '"', ':')
				if b, err = appendNumber(b, v); err != nil {
					return nil, err
				}
			}
			b = append(b, '}')
			spill()
		}
		b = append(b, "]}"...)
	}
	b = append(b, `,"checksum":"`...)
	b = append(b, sum...)
	b = append(b, `"}`...)
	if w != nil {
		w.Write(b)
		return nil, nil
	}
	return b, nil
}

// appendNumber appends v as encoding/json writes a float64, which is how
// JavaScript writes a number: the shortest decimal that parses back to v,
// in exponent form (with no leading zero in the exponent) below 1e-6 and
// from 1e21 on. NaN and ±Inf have no JSON form.
func appendNumber(b []byte, v float64) ([]byte, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return b, fmt.Errorf("%w: value %v cannot be encoded", ErrModel, v)
	}
	form := byte('f')
	if abs := math.Abs(v); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		form = 'e'
	}
	b = strconv.AppendFloat(b, v, form, -1, 64)
	if n := len(b); form == 'e' && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
		b[n-2] = b[n-1] // e-07 → e-7
		b = b[:n-1]
	}
	return b, nil
}

// UnmarshalJSON decodes a version 1 or 2 document within the default
// DecodeLimits; see ReadModel for the checks. Any problem returns an error
// wrapping ErrModel and leaves m unchanged. Do not decode into a Model that
// other goroutines are using.
func (m *Model) UnmarshalJSON(b []byte) error {
	d, err := decodeModel(b, (*DecodeLimits)(nil).resolved())
	if err != nil {
		return err
	}
	*m = *d
	return nil
}

// The members of a model document: those of version 2 in canonical
// order. Version 1 has format, version, metric, k, dim, scaler and centers.
var topMembers = [...]string{"format", "version", "library", "created", "metric", "k", "dim", "features", "scaler", "centers", "training", "checksum"}

const (
	memFormat = iota
	memVersion
	memLibrary
	memCreated
	memMetric
	memK
	memDim
	memFeatures
	memScaler
	memCenters
	memTraining
	memChecksum
)

const (
	// v1Members are the members of a version 1 document.
	v1Members = 1<<memFormat | 1<<memVersion | 1<<memMetric | 1<<memK | 1<<memDim | 1<<memScaler | 1<<memCenters
	// needMembers are the members every document must have; a version 2
	// document without a checksum fails with ErrChecksum instead.
	needMembers = 1<<memFormat | 1<<memVersion | 1<<memMetric | 1<<memK | 1<<memDim | 1<<memCenters
)

// Longest strings read for the members that hold one (besides feature
// names and the library, see MaxFeatureName and maxLibraryName).
const (
	maxWord     = 64  // format, metric, created, a scaler's kind
	maxChecksum = 128 // the checksum is 71 bytes
)

// decodeModel decodes and checks a document of any supported version.
func decodeModel(b []byte, lim DecodeLimits) (*Model, error) {
	c, err := readDocument(b, lim)
	if err != nil {
		return nil, err
	}
	var sum string
	if c.version == ModelVersion {
		if sum, err = c.verify(b); err != nil {
			return nil, err
		}
	}
	m := newModel(c.centers, c.k, c.d, c.metric, c.scaler)
	m.library, m.created, m.features, m.columns, m.training = c.library, c.created, c.features, c.columns, c.training
	if sum != "" {
		m.digest.once.Do(func() { m.digest.sum = sum })
	}
	return m, nil
}

// content is what a document holds, checked but for its checksum: the
// parts of a Model that its document encodes.
type content struct {
	version  int
	k, d     int
	centers  []float64
	metric   distance.Objective
	scaler   scale.Scaler
	library  string
	created  time.Time
	features []string
	columns  map[string]int
	training *Training
	sumAt    int // offset of the checksum's value; 0: absent
}

// checksum returns the checksum of the content's canonical encoding.
func (c *content) checksum() (string, error) {
	m := &Model{k: c.k, d: c.d, centers: c.centers, metric: c.metric, scaler: c.scaler, library: c.library,
		created: c.created, features: c.features, training: c.training, digest: new(digest)}
	return m.Checksum()
}

// verify compares the checksum that document b states with the content's,
// and returns it. It is done before the model is built, so that a
// document that fails it costs no more than reading it.
func (c *content) verify(b []byte) (string, error) {
	if c.sumAt == 0 {
		return "", fmt.Errorf("%w: the document has no checksum", ErrChecksum)
	}
	r := jsonReader{b: b, i: c.sumAt}
	claim, err := r.str(maxChecksum, "checksum")
	if err != nil {
		return "", fmt.Errorf("%w: %w", ErrChecksum, err)
	}
	if claim == "" {
		return "", fmt.Errorf("%w: the document has no checksum", ErrChecksum)
	}
	want, err := c.checksum()
	if err != nil {
		return "", err
	}
	if claim != want {
		return "", fmt.Errorf("%w: document says %s, content hashes to %q", ErrChecksum, quote(claim), want)
	}
	return want, nil
}

// span is where a member's value lies in a document; at is 0 for a member
// that is absent (offset 0 holds the document's opening brace).
type span struct{ at, end int }

// readDocument decodes and checks everything in document b but the
// checksum.
//
// It reads b in two passes, so that the order of members does not matter
// and nothing is stored before the declared shape is known: the first
// (scanMembers) checks the syntax, the member names and the nesting and
// notes where each member's value lies, allocating nothing; the second
// reads the values, the small ones first, holding every array to the
// length k and dim declare. No array is stored beyond that length, and the
// k·d centers are allocated only once the limits accept k·d and the
// centers' bytes could hold that many values (at least two bytes each), so
// a document costs at most a small multiple of its size however its
// arrays disagree with its shape.
func readDocument(b []byte, lim DecodeLimits) (*content, error) {
	if int64(len(b)) > lim.MaxBytes {
		return nil, fmt.Errorf("%w: more than %d bytes", ErrTooLarge, lim.MaxBytes)
	}
	at, seen, err := scanMembers(b)
	if err != nil {
		return nil, err
	}
	r := &jsonReader{b: b}
	// read positions r at member idx's value.
	read := func(idx int) *jsonReader {
		r.i = at[idx].at
		return r
	}

	var (
		format  string
		version int
	)
	if seen&(1<<memFormat) != 0 {
		if format, err = read(memFormat).str(maxWord, "format"); err != nil {
			return nil, err
		}
	}
	if format != modelFormat {
		return nil, fmt.Errorf("%w: format %s, want %q", ErrModel, quote(format), modelFormat)
	}
	if seen&(1<<memVersion) == 0 {
		return nil, fmt.Errorf("%w: the document has no version", ErrVersion)
	}
	if version, err = read(memVersion).integer("version"); err != nil {
		return nil, err
	}
	if version != 1 && version != ModelVersion {
		return nil, fmt.Errorf("%w: version %d (this build reads 1 and %d)", ErrVersion, version, ModelVersion)
	}
	if extra := seen &^ v1Members; version == 1 && extra != 0 {
		for q, name := range topMembers {
			if extra&(1<<q) != 0 {
				r.i = at[q].at
				return nil, r.errorf("member %q is not part of a version 1 document", name)
			}
		}
	}
	if err := r.missing(topMembers[:], seen, needMembers, "document", 0); err != nil {
		return nil, err
	}

	metricName, err := read(memMetric).str(maxWord, "metric")
	if err != nil {
		return nil, err
	}
	metric, err := distance.ByName(metricName)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok {
		return nil, fmt.Errorf("%w: metric %q has no center rule", ErrModel, metricName)
	}
	k, err := read(memK).integer("k")
	if err != nil {
		return nil, err
	}
	dim, err := read(memDim).integer("dim")
	if err != nil {
		return nil, err
	}
	if k < 1 || dim < 1 {
		return nil, fmt.Errorf("%w: k = %d, dim = %d", ErrModel, k, dim)
	}
	if k > lim.MaxValues/dim {
		return nil, fmt.Errorf("%w: k·dim = %d·%d exceeds %d values", ErrTooLarge, k, dim, lim.MaxValues)
	}
	centers, err := read(memCenters).centers(k, dim, at[memCenters].end-at[memCenters].at)
	if err != nil {
		return nil, err
	}
	if err := checkCenters(centers, k, dim, obj); err != nil {
		return nil, err
	}
	var sc scale.Scaler
	if s := at[memScaler]; s.at != 0 && !read(memScaler).null() {
		if err := read(memScaler).scalerShape(dim); err != nil {
			return nil, err
		}
		if sc, err = scale.Decode(b[s.at:s.end]); err != nil {
			return nil, fmt.Errorf("%w: %w", ErrModel, err)
		}
		if sc.Dim() != dim {
			return nil, fmt.Errorf("%w: scaler has %d columns, model has %d", ErrModel, sc.Dim(), dim)
		}
	}

	var (
		library  string
		created  time.Time
		features []string
		columns  map[string]int
		training *Training
	)
	if seen&(1<<memLibrary) != 0 {
		if library, err = read(memLibrary).str(maxLibraryName, "library"); err != nil {
			return nil, err
		}
		if err := checkName(library, maxLibraryName); err != nil {
			return nil, fmt.Errorf("%w: library: %v", ErrModel, err)
		}
	}
	if seen&(1<<memCreated) != 0 {
		s, err := read(memCreated).str(maxWord, "created")
		if err != nil {
			return nil, err
		}
		t, err := time.Parse(time.RFC3339Nano, s)
		if err != nil {
			return nil, fmt.Errorf("%w: created: %v", ErrModel, err)
		}
		if _, off := t.Zone(); off != 0 {
			return nil, fmt.Errorf("%w: created %q is not in UTC", ErrModel, s)
		}
		created = t.UTC()
	}
	if seen&(1<<memFeatures) != 0 {
		if features, err = read(memFeatures).features(dim); err != nil {
			return nil, err
		}
		if columns, err = checkFeatures(features, dim); err != nil {
			return nil, fmt.Errorf("%w: %w", ErrModel, err)
		}
	}
	if seen&(1<<memTraining) != 0 {
		if training, err = read(memTraining).training(k); err != nil {
			return nil, err
		}
	}

	return &content{version: version, k: k, d: dim, centers: centers, metric: obj, scaler: sc, library: library,
		created: created, features: features, columns: columns, training: training, sumAt: at[memChecksum].at}, nil
}

// scanMembers is the first pass over document b: it checks the syntax,
// the member names of the top-level object and the nesting, and returns
// where each member's value lies and which members are present.
func scanMembers(b []byte) (at [len(topMembers)]span, seen uint64, err error) {
	r := &jsonReader{b: b}
	if err := r.open('{', "a model document (an object)"); err != nil {
		return at, 0, err
	}
	for n := 0; ; n++ {
		more, err := r.more('}', n)
		if err != nil {
			return at, 0, err
		}
		if !more {
			break
		}
		idx, err := r.member(topMembers[:], &seen, "document")
		if err != nil {
			return at, 0, err
		}
		r.space()
		start := r.i
		if err := r.skip(1); err != nil {
			return at, 0, err
		}
		at[idx] = span{start, r.i}
	}
	return at, seen, r.end()
}

// centers reads k rows of dim numbers from a value of n bytes into one
// k·dim slice, failing at the first row or value beyond the shape.
func (r *jsonReader) centers(k, dim, n int) ([]float64, error) {
	// Each value takes a digit and a comma or bracket; k·dim ≤ MaxValues
	// does not overflow.
	if k*dim > n/2 {
		return nil, r.errorf("centers: %d bytes cannot hold k·dim = %d·%d values", n, k, dim)
	}
	if err := r.open('[', "the centers (an array)"); err != nil {
		return nil, err
	}
	c := make([]float64, 0, k*dim)
	rows := 0
	for ; ; rows++ {
		more, err := r.more(']', rows)
		if err != nil {
			return nil, err
		}
		if !more {
			break
		}
		if rows == k {
			return nil, r.errorf("more than k = %d centers", k)
		}
		if err := r.open('[', "a center (an array)"); err != nil {
			return nil, err
		}
		j := 0
		for ; ; j++ {
			more, err := r.more(']', j)
			if err != nil {
				return nil, err
			}
			if !more {
				break
			}
			if j == dim {
				return nil, r.errorf("center %d has more than dim = %d values", rows, dim)
			}
			v, err := r.number("a center value")
			if err != nil {
				return nil, err
			}
			c = append(c, v)
		}
		if j < dim {
			return nil, r.errorf("center %d has %d values, want %d", rows, j, dim)
		}
	}
	if rows < k {
		return nil, r.errorf("k = %d with %d centers", k, rows)
	}
	return c, nil
}

// features reads an array of at most dim feature names.
func (r *jsonReader) features(dim int) ([]string, error) {
	if err := r.open('[', "the features (an array)"); err != nil {
		return nil, err
	}
	var names []string
	for n := 0; ; n++ {
		more, err := r.more(']', n)
		if err != nil {
			return nil, err
		}
		if !more {
			return names, nil
		}
		if n == dim {
			return nil, fmt.Errorf("%w: %w", ErrSchema, r.errorf("more than dim = %d feature names", dim))
		}
		name, err := r.str(MaxFeatureName, "a feature name")
		if err != nil {
			return nil, fmt.Errorf("%w: feature %d: %w", ErrSchema, n, err)
		}
		names = append(names, name)
	}
}

// scalerMembers are the members of an encoded scaler (see package scale).
var scalerMembers = []string{"kind", "version", "dim", "offset", "divisor"}

// scalerShape checks an encoded scaler before scale.Decode reads it:
// members named exactly and once each, the kind a short string, version
// and dim integers, offset and divisor arrays of at most dim numbers.
// scale.Decode then checks the content.
func (r *jsonReader) scalerShape(dim int) error {
	if err := r.open('{', "the scaler (an object or null)"); err != nil {
		return err
	}
	var seen uint64
	for n := 0; ; n++ {
		more, err := r.more('}', n)
		if err != nil {
			return err
		}
		if !more {
			return nil
		}
		idx, err := r.member(scalerMembers, &seen, "scaler")
		if err != nil {
			return err
		}
		switch idx {
		case 0:
			_, err = r.str(maxWord, "the scaler's kind")
		case 1:
			_, err = r.integer("the scaler's version")
		case 2:
			_, err = r.integer("the scaler's dim")
		default:
			err = r.scalerArray(dim, scalerMembers[idx])
		}
		if err != nil {
			return err
		}
	}
}

// scalerArray reads an array of at most dim numbers.
func (r *jsonReader) scalerArray(dim int, name string) error {
	if err := r.open('[', "an array of scaler values"); err != nil {
		return err
	}
	for n := 0; ; n++ {
		more, err := r.more(']', n)
		if err != nil {
			return err
		}
		if !more {
			return nil
		}
		if n == dim {
			return r.errorf("the scaler's %s has more than dim = %d values", name, dim)
		}
		if _, err := r.number("a scaler value"); err != nil {
			return err
		}
	}
}

// The members of the training summary and of one cluster's entry, all
// required.
var (
	trainingMembers = []string{"rows", "clusters"}
	clusterMembers  = []string{"size", "weight", "cost", "p50", "p90", "p99", "max"}
	clusterValues   = []string{"a cluster's size", "a cluster's weight", "a cluster's cost", "a cluster's p50", "a cluster's p90", "a cluster's p99", "a cluster's max"}
)

// training reads and checks the training summary of a model of k clusters.
func (r *jsonReader) training(k int) (*Training, error) {
	at := r.i
	if err := r.open('{', "the training summary (an object)"); err != nil {
		return nil, err
	}
	t := new(Training)
	var seen uint64
	for n := 0; ; n++ {
		more, err := r.more('}', n)
		if err != nil {
			return nil, err
		}
		if !more {
			break
		}
		idx, err := r.member(trainingMembers, &seen, "training")
		if err != nil {
			return nil, err
		}
		if idx == 0 {
			t.Rows, err = r.integer("training rows")
		} else {
			t.Clusters, err = r.clusters(k)
		}
		if err != nil {
			return nil, err
		}
	}
	if err := r.missing(trainingMembers, seen, 1<<len(trainingMembers)-1, "training", at); err != nil {
		return nil, err
	}
	if err := t.check(k); err != nil {
		return nil, err
	}
	return t, nil
}

// clusters reads at most k cluster entries of a training summary.
func (r *jsonReader) clusters(k int) ([]ClusterSummary, error) {
	if err := r.open('[', "the training clusters (an array)"); err != nil {
		return nil, err
	}
	var cs []ClusterSummary
	for n := 0; ; n++ {
		more, err := r.more(']', n)
		if err != nil {
			return nil, err
		}
		if !more {
			return cs, nil
		}
		if n == k {
			return nil, r.errorf("training: more than k = %d clusters", k)
		}
		c, err := r.cluster()
		if err != nil {
			return nil, err
		}
		cs = append(cs, c)
	}
}

// cluster reads one cluster's entry of a training summary.
func (r *jsonReader) cluster() (ClusterSummary, error) {
	var c ClusterSummary
	at := r.i
	if err := r.open('{', "a training cluster (an object)"); err != nil {
		return c, err
	}
	fields := [...]*float64{nil, &c.Weight, &c.Cost, &c.Distances.P50, &c.Distances.P90, &c.Distances.P99, &c.Distances.Max}
	var seen uint64
	for n := 0; ; n++ {
		more, err := r.more('}', n)
		if err != nil {
			return c, err
		}
		if !more {
			break
		}
		idx, err := r.member(clusterMembers, &seen, "training cluster")
		if err != nil {
			return c, err
		}
		if idx == 0 {
			c.Size, err = r.integer("a cluster's size")
		} else {
			*fields[idx], err = r.number(clusterValues[idx])
		}
		if err != nil {
			return c, err
		}
	}
	return c, r.missing(clusterMembers, seen, 1<<len(clusterMembers)-1, "training cluster", at)
}
