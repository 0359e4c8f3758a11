package geodesic

// All of the package's cgo lives in this file: the PROJ calls that
// github.com/twpayne/go-proj/v10 does not expose (proj_factors, the
// ellipsoid, datum and unit of a CRS, its PROJ-string form) and Karney's
// geodesic routines from PROJ's geodesic.h. Every C string is freed in the
// function that made it; every PJ and PJ_CONTEXT made here is destroyed here
// or by (*factorHandle).destroy.

/*
#cgo pkg-config: proj
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <proj.h>
#include <geodesic.h>

typedef struct {
	int    type;          // PJ_TYPE of the CRS as given
	int    horiz_type;    // PJ_TYPE of its horizontal part
	double a;             // semi-major axis, metres
	double inv_f;         // inverse flattening, 0 for a sphere
	double unit_factor;   // metres per unit of the first axis
	int    has_proj_string;
	char   name[256];
	char   datum[256];
	char   ellipsoid[256];
	char   unit[64];
	char   unit_auth[32];   // authority of the axis unit's code, e.g. "EPSG"; "" if none
	char   unit_code[32];   // e.g. "9003"
	char   proj_string[2048];
	int    has_area;        // the area of use is known
	double west, south, east, north; // its bounding box, degrees
	char   err[512];
} geored_crs_info;

static void geored_copy(char *dst, size_t n, const char *src) {
	if (src == NULL) { dst[0] = 0; return; }
	strncpy(dst, src, n - 1);
	dst[n - 1] = 0;
}

static void geored_err(PJ_CONTEXT *ctx, geored_crs_info *out, const char *what) {
	int e = proj_context_errno(ctx);
	const char *msg = e ? proj_context_errno_string(ctx, e) : "no further detail from PROJ";
	snprintf(out->err, sizeof out->err, "%s: %s", what, msg ? msg : "unknown PROJ error");
}

// geored_inspect opens def in a private context and fills out. It returns 0
// on success; on failure out->err holds the reason.
static int geored_inspect(const char *def, geored_crs_info *out) {
	memset(out, 0, sizeof *out);
	PJ_CONTEXT *ctx = proj_context_create();
	proj_log_level(ctx, PJ_LOG_NONE);
	proj_context_set_enable_network(ctx, 0);
	int rc = -1;
	PJ *crs = NULL, *horiz = NULL, *ell = NULL, *datum = NULL, *cs = NULL;

	crs = proj_create(ctx, def);
	if (crs == NULL) { geored_err(ctx, out, "PROJ cannot open it"); goto done; }
	out->type = proj_get_type(crs);
	geored_copy(out->name, sizeof out->name, proj_get_name(crs));
	if (out->type == PJ_TYPE_COMPOUND_CRS) {
		horiz = proj_crs_get_sub_crs(ctx, crs, 0);
		if (horiz == NULL) { geored_err(ctx, out, "compound CRS without a horizontal part"); goto done; }
	} else {
		horiz = proj_clone(ctx, crs);
	}
	out->horiz_type = proj_get_type(horiz);
	if (out->horiz_type != PJ_TYPE_PROJECTED_CRS) { rc = 0; goto done; }
	// proj.db's area of use; a CRS from a PROJ string has none (-1000).
	out->has_area = proj_get_area_of_use(ctx, crs, &out->west, &out->south, &out->east, &out->north, NULL) &&
		out->west > -1000 && out->south > -1000 && out->east > -1000 && out->north > -1000;

	ell = proj_get_ellipsoid(ctx, horiz);
	if (ell == NULL) { geored_err(ctx, out, "no ellipsoid"); goto done; }
	double b = 0; int computed = 0;
	if (!proj_ellipsoid_get_parameters(ctx, ell, &out->a, &b, &computed, &out->inv_f)) {
		geored_err(ctx, out, "no ellipsoid parameters"); goto done;
	}
	geored_copy(out->ellipsoid, sizeof out->ellipsoid, proj_get_name(ell));

	datum = proj_crs_get_datum_forced(ctx, horiz);
	if (datum != NULL) geored_copy(out->datum, sizeof out->datum, proj_get_name(datum));

	cs = proj_crs_get_coordinate_system(ctx, horiz);
	if (cs == NULL) { geored_err(ctx, out, "no coordinate system"); goto done; }
	const char *unit = NULL, *unit_auth = NULL, *unit_code = NULL;
	if (!proj_cs_get_axis_info(ctx, cs, 0, NULL, NULL, NULL, &out->unit_factor, &unit, &unit_auth, &unit_code)) {
		geored_err(ctx, out, "no axis unit"); goto done;
	}
	geored_copy(out->unit, sizeof out->unit, unit);
	geored_copy(out->unit_auth, sizeof out->unit_auth, unit_auth);
	geored_copy(out->unit_code, sizeof out->unit_code, unit_code);
	double factor2 = 0;
	const char *unit2 = NULL;
	if (proj_cs_get_axis_count(ctx, cs) < 2 ||
	    !proj_cs_get_axis_info(ctx, cs, 1, NULL, NULL, NULL, &factor2, &unit2, NULL, NULL)) {
		geored_err(ctx, out, "no second axis"); goto done;
	}
	if (factor2 != out->unit_factor) {
		snprintf(out->err, sizeof out->err, "its first axis is in %s (%.17g m) but its second in %s (%.17g m): geored needs one unit for easting and northing",
			unit ? unit : "an unnamed unit", out->unit_factor, unit2 ? unit2 : "an unnamed unit", factor2);
		goto done;
	}

	const char *ps = proj_as_proj_string(ctx, horiz, PJ_PROJ_5, NULL);
	if (ps != NULL && strlen(ps) < sizeof out->proj_string) {
		geored_copy(out->proj_string, sizeof out->proj_string, ps);
		out->has_proj_string = 1;
	}
	rc = 0;
done:
	if (cs) proj_destroy(cs);
	if (datum) proj_destroy(datum);
	if (ell) proj_destroy(ell);
	if (horiz) proj_destroy(horiz);
	if (crs) proj_destroy(crs);
	proj_context_destroy(ctx);
	return rc;
}

// A factor handle: its own context and one projection operation, used by one
// goroutine at a time.
typedef struct {
	PJ_CONTEXT *ctx;
	PJ *pj;
} geored_factors_handle;

static int geored_factors_open(const char *def, geored_factors_handle *h, char *err, size_t n) {
	h->ctx = proj_context_create();
	proj_log_level(h->ctx, PJ_LOG_NONE);
	proj_context_set_enable_network(h->ctx, 0);
	h->pj = proj_create(h->ctx, def);
	if (h->pj == NULL) {
		int e = proj_context_errno(h->ctx);
		snprintf(err, n, "%s", e ? proj_context_errno_string(h->ctx, e) : "unknown PROJ error");
		proj_context_destroy(h->ctx);
		h->ctx = NULL;
		return -1;
	}
	return 0;
}

static void geored_factors_close(geored_factors_handle *h) {
	if (h->pj) proj_destroy(h->pj);
	if (h->ctx) proj_context_destroy(h->ctx);
	h->pj = NULL;
	h->ctx = NULL;
}

// geored_factors returns proj_errno after the call (0 on success).
static int geored_factors(geored_factors_handle *h, double lam, double phi, PJ_FACTORS *f) {
	int last = proj_errno_reset(h->pj);
	PJ_COORD c = proj_coord(lam, phi, 0, 0);
	*f = proj_factors(h->pj, c);
	int e = proj_errno(h->pj);
	proj_errno_restore(h->pj, last);
	return e;
}

typedef struct {
	double s12, azi1, azi2;
} geored_inverse_result;

static geored_inverse_result geored_inverse(const struct geod_geodesic *g,
		double lat1, double lon1, double lat2, double lon2) {
	geored_inverse_result r;
	geod_inverse(g, lat1, lon1, lat2, lon2, &r.s12, &r.azi1, &r.azi2);
	return r;
}

typedef struct {
	double lat, lon, azi;
} geored_position;

static geored_position geored_direct(const struct geod_geodesic *g,
		double lat1, double lon1, double azi1, double s12) {
	geored_position p;
	geod_direct(g, lat1, lon1, azi1, s12, &p.lat, &p.lon, &p.azi);
	return p;
}

typedef struct {
	double s12, azi1, azi2, mid_lat, mid_lon;
} geored_inverse_mid;

// geored_inverse_midpoint solves the inverse problem and finds the
// midpoint on one geodesic line.
static geored_inverse_mid geored_inverse_midpoint(const struct geod_geodesic *g,
		double lat1, double lon1, double lat2, double lon2) {
	struct geod_geodesicline l;
	geored_inverse_mid r;
	double lat, lon;
	geod_inverseline(&l, g, lat1, lon1, lat2, lon2, GEOD_LATITUDE | GEOD_LONGITUDE | GEOD_AZIMUTH | GEOD_DISTANCE_IN);
	r.s12 = l.s13;
	r.azi1 = l.azi1;
	geod_position(&l, l.s13, &lat, &lon, &r.azi2);
	geod_position(&l, l.s13 / 2, &r.mid_lat, &r.mid_lon, NULL);
	return r;
}

*/
import "C"

import (
	"errors"
	"fmt"
	"unsafe"
)

// crsInfo is what inspectCRS learns of a CRS definition from proj.db.
type crsInfo struct {
	kind, horizontalKind   crsKind
	name, datum, ellipsoid string
	a, invF                float64
	unit                   string
	unitCode               string // "EPSG:9003"; "" when PROJ gives the unit no code
	metresPerUnit          float64
	projString             string // PROJ-5 string of the horizontal CRS, "" if it has none
	area                   Area   // proj.db's area of use, if any
}

// crsKind is PROJ's PJ_TYPE, reduced to the cases a job needs to tell apart.
type crsKind int

const (
	kindOther crsKind = iota
	kindProjected
	kindGeographic
	kindGeocentric
	kindCompound
	kindVertical
	kindEngineering
	kindNotCRS
)

func kindOf(t C.int) crsKind {
	switch uint32(t) {
	case C.PJ_TYPE_PROJECTED_CRS:
		return kindProjected
	case C.PJ_TYPE_GEOGRAPHIC_2D_CRS, C.PJ_TYPE_GEOGRAPHIC_3D_CRS, C.PJ_TYPE_GEOGRAPHIC_CRS, C.PJ_TYPE_GEODETIC_CRS:
		return kindGeographic
	case C.PJ_TYPE_GEOCENTRIC_CRS:
		return kindGeocentric
	case C.PJ_TYPE_COMPOUND_CRS:
		return kindCompound
	case C.PJ_TYPE_VERTICAL_CRS:
		return kindVertical
	case C.PJ_TYPE_ENGINEERING_CRS:
		return kindEngineering
	case C.PJ_TYPE_CONVERSION, C.PJ_TYPE_TRANSFORMATION, C.PJ_TYPE_CONCATENATED_OPERATION,
		C.PJ_TYPE_OTHER_COORDINATE_OPERATION, C.PJ_TYPE_ELLIPSOID, C.PJ_TYPE_PRIME_MERIDIAN,
		C.PJ_TYPE_GEODETIC_REFERENCE_FRAME, C.PJ_TYPE_DYNAMIC_GEODETIC_REFERENCE_FRAME,
		C.PJ_TYPE_VERTICAL_REFERENCE_FRAME, C.PJ_TYPE_DYNAMIC_VERTICAL_REFERENCE_FRAME,
		C.PJ_TYPE_DATUM_ENSEMBLE:
		return kindNotCRS
	}
	return kindOther
}

func inspectCRS(def string) (crsInfo, error) {
	cdef := C.CString(def)
	defer C.free(unsafe.Pointer(cdef))
	var out C.geored_crs_info
	if C.geored_inspect(cdef, &out) != 0 {
		return crsInfo{}, errors.New(C.GoString(&out.err[0]))
	}
	info := crsInfo{
		kind:           kindOf(out._type),
		horizontalKind: kindOf(out.horiz_type),
		name:           C.GoString(&out.name[0]),
		datum:          C.GoString(&out.datum[0]),
		ellipsoid:      C.GoString(&out.ellipsoid[0]),
		a:              float64(out.a),
		invF:           float64(out.inv_f),
		unit:           C.GoString(&out.unit[0]),
		metresPerUnit:  float64(out.unit_factor),
	}
	if auth, code := C.GoString(&out.unit_auth[0]), C.GoString(&out.unit_code[0]); auth != "" && code != "" {
		info.unitCode = auth + ":" + code
	}
	if out.has_area != 0 {
		info.area = Area{West: float64(out.west), South: float64(out.south), East: float64(out.east), North: float64(out.north), Known: true}
	}
	if out.has_proj_string != 0 {
		info.projString = C.GoString(&out.proj_string[0])
	}
	return info, nil
}

// factorHandle owns a PROJ context and one projection operation for
// proj_factors. It must be used by one goroutine at a time.
type factorHandle struct {
	h  C.geored_factors_handle
	pf C.PJ_FACTORS // the answer's place: a local passed to C would be a heap allocation a call
}

func openFactorHandle(def string) (*factorHandle, error) {
	cdef := C.CString(def)
	defer C.free(unsafe.Pointer(cdef))
	f := &factorHandle{}
	var errbuf [256]C.char
	if C.geored_factors_open(cdef, &f.h, &errbuf[0], C.size_t(len(errbuf))) != 0 {
		return nil, fmt.Errorf("PROJ cannot create %q: %s", def, C.GoString(&errbuf[0]))
	}
	return f, nil
}

func (f *factorHandle) destroy() {
	C.geored_factors_close(&f.h)
}

// rawFactors are PROJ's PJ_FACTORS; angles in radians.
type rawFactors struct {
	meridionalScale, parallelScale, arealScale float64
	angularDistortion, meridianParallelAngle   float64
	meridianConvergence                        float64
}

// factors calls proj_factors at (lam, phi) in radians.
func (f *factorHandle) factors(lam, phi float64) (rawFactors, int) {
	errno := C.geored_factors(&f.h, C.double(lam), C.double(phi), &f.pf)
	pf := &f.pf
	return rawFactors{
		meridionalScale:       float64(pf.meridional_scale),
		parallelScale:         float64(pf.parallel_scale),
		arealScale:            float64(pf.areal_scale),
		angularDistortion:     float64(pf.angular_distortion),
		meridianParallelAngle: float64(pf.meridian_parallel_angle),
		meridianConvergence:   float64(pf.meridian_convergence),
	}, int(errno)
}

// projErrnoString is PROJ's text for errno.
func projErrnoString(errno int) string {
	return C.GoString(C.proj_context_errno_string(nil, C.int(errno)))
}

// geodCore wraps PROJ's struct geod_geodesic, which is immutable after
// geod_init and safe for concurrent use.
type geodCore struct {
	g C.struct_geod_geodesic
}

func newGeodCore(a, f float64) *geodCore {
	c := &geodCore{}
	C.geod_init(&c.g, C.double(a), C.double(f))
	return c
}

// inverse returns s12 (metres) and the azimuths (degrees) between two points
// given in degrees.
func (c *geodCore) inverse(lat1, lon1, lat2, lon2 float64) (s12, azi1, azi2 float64) {
	r := C.geored_inverse(&c.g, C.double(lat1), C.double(lon1), C.double(lat2), C.double(lon2))
	return float64(r.s12), float64(r.azi1), float64(r.azi2)
}

// direct returns the end point and the azimuth there, in degrees.
func (c *geodCore) direct(lat1, lon1, azi1, s12 float64) (lat2, lon2, azi2 float64) {
	p := C.geored_direct(&c.g, C.double(lat1), C.double(lon1), C.double(azi1), C.double(s12))
	return float64(p.lat), float64(p.lon), float64(p.azi)
}

// inverseMidpoint returns the inverse solution and the midpoint, in
// metres and degrees.
func (c *geodCore) inverseMidpoint(lat1, lon1, lat2, lon2 float64) (s12, azi1, azi2, midLat, midLon float64) {
	r := C.geored_inverse_midpoint(&c.g, C.double(lat1), C.double(lon1), C.double(lat2), C.double(lon2))
	return float64(r.s12), float64(r.azi1), float64(r.azi2), float64(r.mid_lat), float64(r.mid_lon)
}
