/* The compiled core of placer's exact search (see placer/engine/search.py).
 *
 * Two functions, called from search.py with plain buffers (the CPython C API
 * and the buffer protocol only; no numpy headers):
 *
 *   build(coords, D, order, pos, item, cap, stock, width, grid_dims, occupancy, max_rows,
 *         scan)
 *       Every feasible multiset of `width` placements (a <= b <= c, capacity
 *       and stock respected) in a uniform grid over its summed effect (the
 *       first `grid_dims` coordinates): the rows sorted by cell, and where
 *       each cell starts.  None when there would be more than max_rows rows.
 *
 *   search(table, placements, query)
 *       Depth-first over heads of k - width parts (placements in order,
 *       largest first; a head is cut by the bound from the largest part that
 *       is left), each head completed by the rows of the grid nearest to it,
 *       shell by shell, until no cell can hold a better row.  Two aims: the
 *       least residual below an incumbent, or the least added mass within a
 *       radius.  Work is counted (head nodes, cells and rows looked at); past
 *       the budget the search returns "declined".  Signals (the command's time
 *       limit, Ctrl-C) are checked every WORK_TICK units of work.
 *
 * References: meet in the middle and branch and bound, [HorowitzSahni1974];
 * uniform grids for nearest neighbours, [Bentley1975] (both in REFERENCES.md).
 */
#define PY_SSIZE_T_CLEAN
#include <Python.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MAXD 16      /* real coordinates of the search space (2 x rank) */
#define MAXG 4       /* coordinates the grid indexes */
#define MAXF 128     /* real coordinates of a full residual (2 x channels), max norm */
#define MAXK 16      /* longest plan */
#define WORK_TICK 262144LL

#if defined(__GNUC__) || defined(__clang__)
#define FETCH(address) __builtin_prefetch(address)
#else
#define FETCH(address) ((void)(address))
#endif

enum { ST_RUN = 0, ST_BUDGET = 1, ST_STOP = 2, ST_ERROR = 3 };

/* ------------------------------------------------------------ buffers */
typedef struct {
    Py_buffer view;
    int held;
} Buf;

static int get_buf(PyObject *obj, Buf *b, const char *fmt, Py_ssize_t itemsize,
                   const char *what) {
    b->held = 0;
    if (obj == Py_None) {
        b->view.buf = NULL;
        b->view.len = 0;
        return 0;
    }
    if (PyObject_GetBuffer(obj, &b->view, PyBUF_C_CONTIGUOUS | PyBUF_FORMAT) < 0)
        return -1;
    b->held = 1;
    if (b->view.itemsize != itemsize ||
        (fmt && b->view.format && strchr(fmt, b->view.format[0]) == NULL)) {
        PyErr_Format(PyExc_TypeError, "kernel: %s has the wrong item type", what);
        return -1;
    }
    return 0;
}

static void rel_buf(Buf *b) {
    if (b->held) PyBuffer_Release(&b->view);
    b->held = 0;
}

/* ------------------------------------------------------------ feasibility */
/* Multiset idx[0..w) of placements: no position past its capacity, no item past stock. */
static int tuple_ok(const int32_t *idx, int w, const int64_t *pos, const int64_t *item,
                    const int64_t *cap, const int64_t *stock) {
    for (int c = 0; c < w; c++) {
        int sp = 0, si = 0;
        for (int d = 0; d < w; d++) {
            sp += pos[idx[d]] == pos[idx[c]];
            si += item[idx[d]] == item[idx[c]];
        }
        if (sp > cap[pos[idx[c]]] || si > stock[item[idx[c]]]) return 0;
    }
    return 1;
}

/* ------------------------------------------------------------ build */
typedef struct {
    const double *co;
    int D, G, w;
    Py_ssize_t n;
    const int64_t *pos, *item, *cap, *stock, *order;
    double lo[MAXG], hi[MAXG], h, inv_h;
    int64_t gn[MAXG], stride[MAXG];
    Py_ssize_t rows;
    uint32_t *count;
    int32_t *out;
    int pass; /* 1 count, 2 fill */
    Py_ssize_t max_rows;
    int over;        /* 1 past max_rows, 2 a signal handler raised */
} Build;

/* Between rows of the enumeration: let the command's time limit (a signal) stop it. */
static inline int build_interrupted(Build *b) {
    if (!b->over && PyErr_CheckSignals() < 0) b->over = 2;
    return b->over;
}

static inline int64_t cell_of(const double *x, const double *lo, double inv_h,
                              const int64_t *gn, const int64_t *stride, int G) {
    int64_t cell = 0;
    for (int d = 0; d < G; d++) {
        double f = (x[d] - lo[d]) * inv_h;
        int64_t c = f < 0 ? 0 : (f >= (double)(gn[d] - 1) ? gn[d] - 1 : (int64_t)f);
        cell += c * stride[d];
    }
    return cell;
}

static void visit_row(Build *b, const int32_t *idx) {
    double x[MAXG];
    for (int d = 0; d < b->G; d++) {
        double s = 0.0;
        for (int c = 0; c < b->w; c++) s += b->co[(Py_ssize_t)idx[c] * b->D + d];
        x[d] = s;
    }
    int64_t cell = cell_of(x, b->lo, b->inv_h, b->gn, b->stride, b->G);
    if (b->pass == 1) {
        b->count[cell + 1]++;
        b->rows++;
        if (b->rows > b->max_rows) b->over = 1;
    } else {
        uint32_t at = b->count[cell]++;
        memcpy(b->out + (Py_ssize_t)at * b->w, idx, sizeof(int32_t) * b->w);
    }
}

/* Every feasible multiset of b->w placements, once: indices i <= j <= l of the
 * enumeration order (placements by item, then around the circle, so that
 * consecutive rows fall in nearby cells). */
static void enumerate_rows(Build *b) {
    int32_t idx[3];
    Py_ssize_t n = b->n;
    const int64_t *o = b->order;
    if (b->w == 1) {
        for (Py_ssize_t a = 0; a < n && !b->over; a++) {
            idx[0] = (int32_t)o[a];
            visit_row(b, idx);
        }
    } else if (b->w == 2) {
        for (Py_ssize_t a = 0; a < n && !build_interrupted(b); a++) {
            idx[0] = (int32_t)o[a];
            int64_t pa = b->pos[idx[0]], ia = b->item[idx[0]];
            for (Py_ssize_t c = a; c < n; c++) {
                idx[1] = (int32_t)o[c];
                int64_t pc = b->pos[idx[1]], ic = b->item[idx[1]];
                if (pa == pc && b->cap[pa] < 2) continue;
                if (ia == ic && b->stock[ia] < 2) continue;
                visit_row(b, idx);
            }
        }
    } else {
        for (Py_ssize_t a = 0; a < n && !b->over; a++)
            for (Py_ssize_t c = a; c < n && !build_interrupted(b); c++) {
                idx[0] = (int32_t)o[a]; idx[1] = (int32_t)o[c];
                if (!tuple_ok(idx, 2, b->pos, b->item, b->cap, b->stock)) continue;
                for (Py_ssize_t e = c; e < n; e++) {
                    idx[2] = (int32_t)o[e];
                    if (tuple_ok(idx, 3, b->pos, b->item, b->cap, b->stock)) visit_row(b, idx);
                }
            }
    }
}

static PyObject *k_build(PyObject *self, PyObject *args) {
    PyObject *o_co, *o_order, *o_pos, *o_item, *o_cap, *o_stock;
    int D, w, G, scan;
    double occupancy;
    Py_ssize_t max_rows;
    if (!PyArg_ParseTuple(args, "OiOOOOOiidni", &o_co, &D, &o_order, &o_pos, &o_item, &o_cap,
                          &o_stock, &w, &G, &occupancy, &max_rows, &scan))
        return NULL;
    if (w < 1 || w > 3 || G < 1 || G > MAXG || G > D || D > MAXD || occupancy <= 0) {
        PyErr_SetString(PyExc_ValueError, "kernel.build: bad sizes");
        return NULL;
    }
    Buf co, order, pos, item, cap, stock;
    memset(&co, 0, sizeof co); memset(&pos, 0, sizeof pos); memset(&item, 0, sizeof item);
    memset(&cap, 0, sizeof cap); memset(&stock, 0, sizeof stock); memset(&order, 0, sizeof order);
    PyObject *result = NULL;
    PyObject *rows_obj = NULL, *start_obj = NULL;
    if (get_buf(o_co, &co, "d", 8, "coords") < 0 || get_buf(o_pos, &pos, "qlL", 8, "pos") < 0 ||
        get_buf(o_item, &item, "qlL", 8, "item") < 0 || get_buf(o_cap, &cap, "qlL", 8, "cap") < 0 ||
        get_buf(o_stock, &stock, "qlL", 8, "stock") < 0 ||
        get_buf(o_order, &order, "qlL", 8, "order") < 0)
        goto done;
    Build b;
    memset(&b, 0, sizeof b);
    b.co = (const double *)co.view.buf; b.D = D; b.G = G; b.w = w;
    b.n = pos.view.len / 8;
    b.pos = pos.view.buf; b.item = item.view.buf; b.cap = cap.view.buf; b.stock = stock.view.buf;
    b.order = order.view.buf;
    b.max_rows = max_rows;
    if (order.view.len != b.n * 8 || co.view.len != b.n * D * 8) {
        PyErr_SetString(PyExc_ValueError, "kernel.build: buffers do not match");
        goto done;
    }
    /* The box: each coordinate of a sum of w placements lies within w times theirs. */
    for (int d = 0; d < G; d++) {
        double lo = INFINITY, hi = -INFINITY;
        for (Py_ssize_t i = 0; i < b.n; i++) {
            double x = b.co[i * D + d];
            if (x < lo) lo = x;
            if (x > hi) hi = x;
        }
        b.lo[d] = w * lo;
        b.hi[d] = w * hi;
    }
    /* Rows expected (every multiset; capacity and stock only remove a few). */
    double rows_d = 1.0;
    for (int j = 0; j < w; j++) rows_d = rows_d * (double)(b.n + j) / (double)(j + 1);
    Py_ssize_t rows = rows_d < (double)max_rows ? (Py_ssize_t)rows_d : max_rows;
    /* Cell size: about `occupancy` rows a cell over the bounding box.  A coordinate
     * whose extent is a rounding error of the largest is not divided. */
    double volume = 1.0, widest = 0.0;
    int live = 0, is_live[MAXG];
    for (int d = 0; d < G; d++) {
        if (rows == 0) { b.lo[d] = 0; b.hi[d] = 0; }
        double ext = b.hi[d] - b.lo[d];
        if (ext > widest) widest = ext;
    }
    for (int d = 0; d < G; d++) {
        double ext = b.hi[d] - b.lo[d];
        is_live[d] = ext > 1e-9 * widest && ext > 0;
        if (is_live[d]) { volume *= ext; live++; }
    }
    double cells_wanted = rows / occupancy;
    if (cells_wanted < 1) cells_wanted = 1;
    b.h = (live > 0 && !scan) ? pow(volume / cells_wanted, 1.0 / live) : 0.0;
    int64_t total = 1;
    /* Keep the cell array within a few times the rows (and each side within 2^20). */
    for (;;) {
        total = 1;
        for (int d = 0; d < G; d++) {
            double ext = b.hi[d] - b.lo[d];
            double g = (b.h > 0 && is_live[d]) ? floor(ext / b.h) + 1.0 : 1.0;
            b.gn[d] = g > (double)(1 << 20) ? (int64_t)1 << 20 : (int64_t)g;
            total *= b.gn[d];
        }
        if (total <= 4 * (int64_t)rows + 64 || b.h <= 0) break;
        b.h *= 1.25;
    }
    if (b.h <= 0) for (int d = 0; d < G; d++) b.gn[d] = 1;
    total = 1;
    for (int d = G - 1; d >= 0; d--) { b.stride[d] = total; total *= b.gn[d]; }
    b.inv_h = b.h > 0 ? 1.0 / b.h : 0.0;
    start_obj = PyByteArray_FromStringAndSize(NULL, (Py_ssize_t)(total + 1) * 4);
    if (!start_obj) goto done;
    b.count = (uint32_t *)PyByteArray_AS_STRING(start_obj);
    memset(b.count, 0, (size_t)(total + 1) * 4);
    b.pass = 1;
    b.rows = 0;
    if (max_rows >= (Py_ssize_t)UINT32_MAX) b.max_rows = (Py_ssize_t)UINT32_MAX - 1;
    enumerate_rows(&b);
    if (b.over == 2) goto done;
    if (b.over) { Py_INCREF(Py_None); result = Py_None; goto done; }
    rows = b.rows;
    rows_obj = PyByteArray_FromStringAndSize(NULL, (Py_ssize_t)rows * w * 4);
    if (!rows_obj) goto done;
    b.out = (int32_t *)PyByteArray_AS_STRING(rows_obj);
    for (int64_t c = 0; c < total; c++) b.count[c + 1] += b.count[c];
    /* Fill: count[c] runs from the start of cell c; afterwards it is the start of c + 1. */
    b.pass = 2;
    enumerate_rows(&b);
    if (b.over == 2) goto done;
    memmove(b.count + 1, b.count, (size_t)total * 4);
    b.count[0] = 0;
    PyObject *lo = PyTuple_New(G), *gn = PyTuple_New(G);
    if (!lo || !gn) { Py_XDECREF(lo); Py_XDECREF(gn); goto done; }
    for (int d = 0; d < G; d++) {
        PyTuple_SET_ITEM(lo, d, PyFloat_FromDouble(b.lo[d]));
        PyTuple_SET_ITEM(gn, d, PyLong_FromLongLong(b.gn[d]));
    }
    result = Py_BuildValue("(NNNdnN)", rows_obj, start_obj, lo, b.h, rows, gn);
    rows_obj = start_obj = NULL;
done:
    Py_XDECREF(rows_obj);
    Py_XDECREF(start_obj);
    rel_buf(&co); rel_buf(&pos); rel_buf(&item); rel_buf(&cap); rel_buf(&stock);
    rel_buf(&order);
    return result;
}

/* ------------------------------------------------------------ search */
typedef struct {
    /* placements */
    Py_ssize_t n;
    int D, F, C;               /* search coordinates, full coordinates (max norm), channels */
    const double *co, *full;
    const int64_t *pos, *item, *cap, *stock;
    const double *mag, *mag2s, *mass;
    int64_t *pcnt, *icnt;
    /* table */
    int w, G;
    const int32_t *rows;
    const uint32_t *start;
    double lo[MAXG], h;
    int64_t gn[MAXG], stride[MAXG];
    /* query */
    int k, hsize, maxnorm, lightest, sorted_depth;
    double perp2, stop, radius, radius_par2, wmin;
    double t[MAXD], tf[MAXF];
    /* incumbent */
    double U, Upar2, best_mass, best_val;
    int32_t head[MAXK], best[MAXK];
    int have;
    /* the last head level's candidates (see last_level), and whether to use it */
    struct Next *next;
    int fetch_ahead;
    int64_t work, limit, next_tick;
    int status;
} Search;

static inline int spend(Search *s, int64_t amount) {
    s->work += amount;
    if (s->work > s->limit) { s->status = ST_BUDGET; return 1; }
    if (s->work >= s->next_tick) {
        s->next_tick = s->work + WORK_TICK;
        if (PyErr_CheckSignals() < 0) { s->status = ST_ERROR; return 1; }
    }
    return 0;
}

/* Largest channel magnitude of a full residual (real parts, then imaginary). */
static inline double max_norm(const double *r, int F) {
    int c = F / 2;
    double m = 0.0;
    for (int j = 0; j < c; j++) {
        double v = r[j] * r[j] + r[j + c] * r[j + c];
        if (v > m) m = v;
    }
    return sqrt(m);
}

static inline double sq_norm(const double *x, int D) {
    double s = 0.0;
    for (int d = 0; d < D; d++) s += x[d] * x[d];
    return s;
}

/* The row's parts fit beside the head (counts in pcnt and icnt)? */
static inline int row_fits(Search *s, const int32_t *r) {
    for (int c = 0; c < s->w; c++) {
        int64_t p = s->pos[r[c]], it = s->item[r[c]];
        int64_t sp = s->pcnt[p] + 1, si = s->icnt[it] + 1;
        for (int d = 0; d < s->w; d++) {
            if (d == c) continue;
            sp += s->pos[r[d]] == p;
            si += s->item[r[d]] == it;
        }
        if (sp > s->cap[p] || si > s->stock[it]) return 0;
    }
    return 1;
}

static void take(Search *s, const int32_t *r, double value, double mass) {
    int hs = s->hsize;
    memcpy(s->best, s->head, sizeof(int32_t) * hs);
    memcpy(s->best + hs, r, sizeof(int32_t) * s->w);
    s->have = 1;
    if (s->lightest) {
        s->best_mass = mass;
        s->best_val = value;
        return;
    }
    s->U = value;
    if (s->maxnorm) {
        double r2 = (double)s->C * value * value - s->perp2;
        s->Upar2 = r2 > 0 ? r2 : 0.0;
    } else {
        double r2 = value * value - s->perp2;
        s->Upar2 = r2 > 0 ? r2 : 0.0;
    }
    if (value <= s->stop) s->status = ST_STOP;
}

/* Scan one cell's rows for the head whose residual is q (search space), qf (full). */
/* A row near enough in the search space (squared distance d2): feasible beside the head,
 * and better than the incumbent?  Then it becomes the incumbent.  1 to stop. */
static int consider(Search *s, const int32_t *r, double d2, const double *qf, double hmass) {
    int w = s->w;
    if (!row_fits(s, r)) return 0;
    double value;
    if (s->maxnorm) {
        double full[MAXF];
        for (int f = 0; f < s->F; f++) {
            double x = qf[f];
            for (int c = 0; c < w; c++) x += s->full[(Py_ssize_t)r[c] * s->F + f];
            full[f] = x;
        }
        value = max_norm(full, s->F);
    } else {
        value = sqrt(s->perp2 + d2);
    }
    if (s->lightest) {
        if (value > s->radius) return 0;
        double m = hmass;
        for (int c = 0; c < w; c++) m += s->mass[r[c]];
        if (m < s->best_mass - 1e-12 || (m <= s->best_mass + 1e-12 && value < s->best_val))
            take(s, r, value, m);
    } else if (value < s->U) {
        take(s, r, value, 0.0);
        if (s->status) return 1;
    }
    return 0;
}

/* Scan one cell's rows for the head whose residual is q (search space), qf (full). */
static void scan_cell(Search *s, int64_t cell, const double *q, const double *qf,
                      double hmass) {
    uint32_t a = s->start[cell], b = s->start[cell + 1];
    if (a == b) return;
    int D = s->D, w = s->w;
    if (spend(s, (int64_t)(b - a))) return;
    if (D == 2 && w == 2) {
        /* One plane, pairs: the common case, the sums below written out (the same
         * additions in the same order as the general loop, so the same bits). */
        const double *co = s->co;
        for (uint32_t j = a; j < b; j++) {
            const int32_t *r = s->rows + (Py_ssize_t)j * 2;
            const double *e0 = co + (Py_ssize_t)r[0] * 2, *e1 = co + (Py_ssize_t)r[1] * 2;
            double x = q[0] + e0[0] + e1[0], y = q[1] + e0[1] + e1[1];
            double d2 = 0.0 + x * x + y * y;
            double limit2 = s->lightest ? s->radius_par2 : s->Upar2;
            if (s->lightest ? d2 > limit2 : d2 >= limit2) continue;
            if (consider(s, r, d2, qf, hmass)) return;
        }
        return;
    }
    for (uint32_t j = a; j < b; j++) {
        const int32_t *r = s->rows + (Py_ssize_t)j * w;
        double d2 = 0.0;
        for (int d = 0; d < D; d++) {
            double x = q[d];
            for (int c = 0; c < w; c++) x += s->co[(Py_ssize_t)r[c] * D + d];
            d2 += x * x;
        }
        double limit2 = s->lightest ? s->radius_par2 : s->Upar2;
        if (s->lightest ? d2 > limit2 : d2 >= limit2) continue;
        if (consider(s, r, d2, qf, hmass)) return;
    }
}

/* Scan cell `at` (grid indices) if its box is near enough to p; 1 to stop. */
static int visit_cell(Search *s, const int64_t *at, const double *p, const double *q,
                      const double *qf, double hmass) {
    double box2 = 0.0;
    int64_t cell = 0;
    for (int d = 0; d < s->G; d++) {
        int64_t cd = at[d];
        cell += cd * s->stride[d];
        /* Edge cells reach to infinity: rows clamped into them are inside their box. */
        double lo_e = cd == 0 ? -INFINITY : s->lo[d] + cd * s->h;
        double hi_e = cd == s->gn[d] - 1 ? INFINITY : s->lo[d] + (cd + 1) * s->h;
        double gap = p[d] < lo_e ? lo_e - p[d] : (p[d] > hi_e ? p[d] - hi_e : 0.0);
        box2 += gap * gap;
    }
    double limit2 = s->lightest ? s->radius_par2 : s->Upar2;
    if (s->lightest ? box2 <= limit2 : box2 < limit2) {
        scan_cell(s, cell, q, qf, hmass);
        if (s->status) return 1;
    }
    return spend(s, 1);
}

/* Every row of the grid that could complete the head (q, qf) to something better. */
static void lookup(Search *s, const double *q, const double *qf, double hmass) {
    int G = s->G;
    double p[MAXG];
    int64_t c[MAXG];
    int64_t reach = 0;
    for (int d = 0; d < G; d++) {
        p[d] = -q[d];
        double f = s->h > 0 ? floor((p[d] - s->lo[d]) / s->h) : 0.0;
        c[d] = f < 0 ? 0 : (f >= (double)(s->gn[d] - 1) ? s->gn[d] - 1 : (int64_t)f);
        int64_t far = c[d] > s->gn[d] - 1 - c[d] ? c[d] : s->gn[d] - 1 - c[d];
        if (far > reach) reach = far;
    }
    {
        /* A small radius: the cells the ball's bounding box meets, directly. */
        double limit2 = s->lightest ? s->radius_par2 : s->Upar2;
        double radius = sqrt(limit2);
        if (s->h > 0 && radius <= s->h) {
            int64_t lo[MAXG], hi[MAXG], o[MAXG];
            for (int d = 0; d < G; d++) {
                double a = floor((p[d] - radius - s->lo[d]) / s->h);
                double b = floor((p[d] + radius - s->lo[d]) / s->h);
                lo[d] = a < 0 ? 0 : (a > (double)(s->gn[d] - 1) ? s->gn[d] - 1 : (int64_t)a);
                hi[d] = b < 0 ? 0 : (b > (double)(s->gn[d] - 1) ? s->gn[d] - 1 : (int64_t)b);
                o[d] = lo[d];
            }
            for (;;) {
                if (visit_cell(s, o, p, q, qf, hmass)) return;
                int d = G - 1;
                while (d >= 0) {
                    if (o[d] < hi[d]) { o[d]++; break; }
                    o[d] = lo[d];
                    d--;
                }
                if (d < 0) return;
            }
        }
    }
    for (int64_t r = 0; r <= reach; r++) {
        double limit2 = s->lightest ? s->radius_par2 : s->Upar2;
        if (r >= 1) {
            double ring = (double)(r - 1) * s->h;
            if (s->lightest ? ring * ring > limit2 : ring * ring >= limit2) return;
        }
        /* Cells at Chebyshev offset exactly r: dimension `fix` at +-r, those before it
         * inside (-r, r), those after it within [-r, r]. */
        for (int fix = 0; fix < G; fix++) {
            for (int sign = -1; sign <= 1; sign += 2) {
                if (r == 0 && (sign == 1 || fix > 0)) continue;
                int64_t lo[MAXG], hi[MAXG], o[MAXG];
                int empty = 0;
                for (int d = 0; d < G; d++) {
                    int64_t a, b;
                    if (d == fix) { a = b = sign * r; }
                    else if (d < fix) { a = -r + 1; b = r - 1; }
                    else { a = -r; b = r; }
                    if (r == 0) { a = b = 0; }
                    if (c[d] + a < 0) a = -c[d];
                    if (c[d] + b > s->gn[d] - 1) b = s->gn[d] - 1 - c[d];
                    if (a > b) { empty = 1; break; }
                    lo[d] = a; hi[d] = b; o[d] = a;
                }
                if (empty) continue;
                for (;;) {
                    int64_t at[MAXG];
                    for (int d = 0; d < G; d++) at[d] = c[d] + o[d];
                    if (visit_cell(s, at, p, q, qf, hmass)) return;
                    int d = G - 1;
                    while (d >= 0) {
                        if (o[d] < hi[d]) { o[d]++; break; }
                        o[d] = lo[d];
                        d--;
                    }
                    if (d < 0) break;
                }
            }
        }
    }
}

/* Lower bound on any completion of a head (q, qf) by `rem` parts no larger than
 * placement i's (search-space magnitude at most mag2s[i], chosen-norm mag[i]).
 * In the search space for the Euclidean norm (compare with Upar), else in the norm. */
static inline double head_bound(Search *s, double qn, double qm, int rem, Py_ssize_t i) {
    if (!s->maxnorm) return qn - rem * s->mag2s[i];
    double e = qn - rem * s->mag2s[i];
    e = e > 0 ? sqrt((s->perp2 + e * e) / s->C) : sqrt(s->perp2 / s->C);
    double m = qm - rem * s->mag[i];
    return e > m ? e : m;
}

/* Does a bound (see head_bound) rule the head out? */
static inline int bound_cuts(Search *s, double bound) {
    if (s->maxnorm) return s->lightest ? bound > s->radius : bound >= s->U;
    if (bound < 0) return 0;
    return s->lightest ? bound * bound > s->radius_par2 : bound * bound >= s->Upar2;
}

typedef struct {
    double key;
    Py_ssize_t i;
} Cand;

static int cand_cmp(const void *x, const void *y) {
    const Cand *a = x, *b = y;
    if (a->key < b->key) return -1;
    if (a->key > b->key) return 1;
    return (a->i > b->i) - (a->i < b->i);
}

static void dfs(Search *s, int depth, Py_ssize_t first, const double *q, const double *qf,
                double hmass);

static void extend(Search *s, int depth, Py_ssize_t i, const double *q, const double *qf,
                   double hmass) {
    double q2[MAXD], qf2[MAXF];
    for (int d = 0; d < s->D; d++) q2[d] = q[d] + s->co[i * s->D + d];
    if (s->maxnorm)
        for (int f = 0; f < s->F; f++) qf2[f] = qf[f] + s->full[i * s->F + f];
    s->pcnt[s->pos[i]]++;
    s->icnt[s->item[i]]++;
    s->head[depth] = (int32_t)i;
    dfs(s, depth + 1, i, q2, qf2, hmass + s->mass[i]);
    s->pcnt[s->pos[i]]--;
    s->icnt[s->item[i]]--;
}

/* May placement i join the head?  Then the bound of the head with it. */
static inline int admit(Search *s, int depth, Py_ssize_t i, const double *q, const double *qf,
                        double hmass, double *bound) {
    if (s->icnt[s->item[i]] + 1 > s->stock[s->item[i]]) return 0;
    if (s->pcnt[s->pos[i]] + 1 > s->cap[s->pos[i]]) return 0;
    int rem = s->k - depth - 1;
    if (s->lightest && hmass + s->mass[i] + rem * s->wmin >= s->best_mass + 1e-12) return 0;
    double q2[MAXD], qf2[MAXF];
    for (int d = 0; d < s->D; d++) q2[d] = q[d] + s->co[i * s->D + d];
    if (s->maxnorm)
        for (int f = 0; f < s->F; f++) qf2[f] = qf[f] + s->full[i * s->F + f];
    *bound = head_bound(s, sqrt(sq_norm(q2, s->D)), s->maxnorm ? max_norm(qf2, s->F) : 0.0,
                        rem, i);
    return !bound_cuts(s, *bound);
}

/* One candidate of the last head level: its placement, its bound, and the grid cell of the
 * point that would cancel the head with it (-1 when the lookup will not start at one cell). */
typedef struct Next {
    Py_ssize_t i;
    double bound;
    int64_t cell;
} Next;

#define AHEAD 4   /* candidates whose rows are fetched from memory ahead of their lookup */

/* The grid cell holding point p (clamped to the grid), as lookup() finds it. */
static inline int64_t cell_at(const Search *s, const double *p) {
    int64_t cell = 0;
    for (int d = 0; d < s->G; d++) {
        double f = s->h > 0 ? floor((p[d] - s->lo[d]) / s->h) : 0.0;
        int64_t c = f < 0 ? 0 : (f >= (double)(s->gn[d] - 1) ? s->gn[d] - 1 : (int64_t)f);
        cell += c * s->stride[d];
    }
    return cell;
}

/* The last level of the head, the loop of dfs() below in two passes with the same result
 * and the same work counted.  The lookups it leads to wait on memory (a cell's start, then
 * its rows, scattered over a table of megabytes), so the first pass lists the candidates
 * that pass the bound as it stands, with their cells; the second pass walks placement by
 * placement exactly as dfs() would (work, the bound's cut, the candidate's bound against
 * the incumbent as it is now, which can only have shrunk), asking the processor for the
 * start of the cell 2 * AHEAD candidates on and for the rows of the cell AHEAD candidates
 * on before each lookup, so that several fetches are under way at once.  A placement
 * the first pass left out fails again in the second (its bound only grows against a
 * shrinking incumbent; counts and stock are those of the same head), so the same heads
 * are completed in the same order. */
static void last_level(Search *s, int depth, Py_ssize_t first, const double *q,
                       const double *qf, double hmass) {
    int rem = s->k - depth;
    double qn = sqrt(sq_norm(q, s->D)), qm = s->maxnorm ? max_norm(qf, s->F) : 0.0;
    Next *next = s->next;
    Py_ssize_t m = 0;
    for (Py_ssize_t i = first; i < s->n; i++) {
        if (bound_cuts(s, head_bound(s, qn, qm, rem, i))) break;
        double bound;
        if (!admit(s, depth, i, q, qf, hmass, &bound)) continue;
        next[m].i = i;
        next[m].bound = bound;
        next[m].cell = -1;
        if (s->h > 0) {
            double p[MAXG];
            for (int d = 0; d < s->G; d++) p[d] = -(q[d] + s->co[i * s->D + d]);
            next[m].cell = cell_at(s, p);
            if (m < 2 * AHEAD) FETCH(s->start + next[m].cell);
        }
        m++;
    }
    Py_ssize_t i = first;
    for (Py_ssize_t c = 0; c < m; c++) {
        if (c + 2 * AHEAD < m && next[c + 2 * AHEAD].cell >= 0)
            FETCH(s->start + next[c + 2 * AHEAD].cell);
        if (c + AHEAD < m && next[c + AHEAD].cell >= 0) {
            const int32_t *r = s->rows + (Py_ssize_t)s->start[next[c + AHEAD].cell] * s->w;
            FETCH(r);
            FETCH(r + 16);
        }
        Py_ssize_t at = next[c].i;
        for (; i <= at; i++) {
            if (spend(s, 1)) return;
            if (bound_cuts(s, head_bound(s, qn, qm, rem, i))) return;
        }
        if (s->lightest && hmass + s->mass[at] + (rem - 1) * s->wmin >= s->best_mass + 1e-12)
            continue;
        if (bound_cuts(s, next[c].bound)) continue;
        extend(s, depth, at, q, qf, hmass);
        if (s->status) return;
    }
    for (; i < s->n; i++) {
        if (spend(s, 1)) return;
        if (bound_cuts(s, head_bound(s, qn, qm, rem, i))) return;
    }
}

static void dfs(Search *s, int depth, Py_ssize_t first, const double *q, const double *qf,
                double hmass) {
    if (s->status) return;
    if (depth == s->hsize) {
        lookup(s, q, qf, hmass);
        return;
    }
    int rem = s->k - depth;
    if (depth < s->sorted_depth) {
        /* Most promising first: the heads' first parts in order of their bound
         * (of their mass when the lightest plan is sought). */
        Cand *cand = malloc(sizeof(Cand) * (s->n + 1));
        if (!cand) { PyErr_NoMemory(); s->status = ST_ERROR; return; }
        Py_ssize_t m = 0;
        for (Py_ssize_t i = first; i < s->n; i++) {
            if (spend(s, 1)) { free(cand); return; }
            double bound;
            if (!admit(s, depth, i, q, qf, hmass, &bound)) continue;
            cand[m].key = s->lightest ? s->mass[i] : bound;
            cand[m].i = i;
            m++;
        }
        qsort(cand, (size_t)m, sizeof(Cand), cand_cmp);
        for (Py_ssize_t j = 0; j < m && !s->status; j++) {
            Py_ssize_t i = cand[j].i;
            double bound;
            /* The incumbent may have moved since the bound was computed. */
            if (!admit(s, depth, i, q, qf, hmass, &bound)) continue;
            extend(s, depth, i, q, qf, hmass);
        }
        free(cand);
        return;
    }
    if (depth == s->hsize - 1 && s->fetch_ahead) {
        last_level(s, depth, first, q, qf, hmass);
        return;
    }
    double qn = sqrt(sq_norm(q, s->D)), qm = s->maxnorm ? max_norm(qf, s->F) : 0.0;
    for (Py_ssize_t i = first; i < s->n; i++) {
        if (spend(s, 1)) return;
        /* Parts from i on are no larger than i's: once the bound with rem of them cuts,
         * it cuts every later i too. */
        if (bound_cuts(s, head_bound(s, qn, qm, rem, i))) return;
        double bound;
        if (!admit(s, depth, i, q, qf, hmass, &bound)) continue;
        extend(s, depth, i, q, qf, hmass);
        if (s->status) return;
    }
}

static int load_doubles(PyObject *seq, double *out, int size, const char *what) {
    PyObject *fast = PySequence_Fast(seq, what);
    if (!fast) return -1;
    if (PySequence_Fast_GET_SIZE(fast) != size) {
        Py_DECREF(fast);
        PyErr_Format(PyExc_ValueError, "kernel: %s has the wrong length", what);
        return -1;
    }
    for (int j = 0; j < size; j++) {
        out[j] = PyFloat_AsDouble(PySequence_Fast_GET_ITEM(fast, j));
        if (out[j] == -1.0 && PyErr_Occurred()) { Py_DECREF(fast); return -1; }
    }
    Py_DECREF(fast);
    return 0;
}

/* search(table, placements, query)
 *   table      = (rows, start, lo, h, n_rows, gn, width)
 *   placements = (coords, D, full, F, pos, item, cap, mag, mag2s, mass, n_positions)
 *   query      = (t, tf, perp2, stock, k, maxnorm, lightest, bound_or_radius, stop,
 *                 best_mass, best_value, work_limit, fetch_bytes)
 * Returns (status, rows, value, mass, work): status 0 done (rows None if nothing beat the
 * incumbent), 1 over budget, 2 stopped at a plan within `stop` (not every head examined). */
static PyObject *k_search(PyObject *self, PyObject *args) {
    PyObject *table, *placements, *query;
    if (!PyArg_ParseTuple(args, "O!O!O!", &PyTuple_Type, &table, &PyTuple_Type, &placements,
                          &PyTuple_Type, &query))
        return NULL;
    Search s;
    memset(&s, 0, sizeof s);
    PyObject *o_rows, *o_start, *o_lo, *o_gn, *o_co, *o_full, *o_pos, *o_item, *o_cap, *o_mag,
        *o_mag2s, *o_mass, *o_t, *o_tf, *o_stock;
    Py_ssize_t n_rows, n_positions;
    double bound;
    long long limit, fetch_bytes;
    if (!PyArg_ParseTuple(table, "OOOdnOi", &o_rows, &o_start, &o_lo, &s.h, &n_rows, &o_gn, &s.w))
        return NULL;
    if (!PyArg_ParseTuple(placements, "OiOiOOOOOOn", &o_co, &s.D, &o_full, &s.F, &o_pos, &o_item,
                          &o_cap, &o_mag, &o_mag2s, &o_mass, &n_positions))
        return NULL;
    if (!PyArg_ParseTuple(query, "OOdOiiiddddLL", &o_t, &o_tf, &s.perp2, &o_stock, &s.k,
                          &s.maxnorm, &s.lightest, &bound, &s.stop, &s.best_mass, &s.best_val,
                          &limit, &fetch_bytes))
        return NULL;
    if (s.D < 1 || s.D > MAXD || s.F < 0 || s.F > MAXF || s.k < s.w || s.k > MAXK ||
        s.w < 1 || s.w > 3) {
        PyErr_SetString(PyExc_ValueError, "kernel.search: bad sizes");
        return NULL;
    }
    s.G = (int)PyTuple_Size(o_lo);
    if (s.G < 1 || s.G > MAXG || PyTuple_Size(o_gn) != s.G) {
        PyErr_SetString(PyExc_ValueError, "kernel.search: bad grid");
        return NULL;
    }
    if (load_doubles(o_lo, s.lo, s.G, "lo") < 0) return NULL;
    for (int d = 0; d < s.G; d++) s.gn[d] = PyLong_AsLongLong(PyTuple_GET_ITEM(o_gn, d));
    if (PyErr_Occurred()) return NULL;
    int64_t total = 1;
    for (int d = s.G - 1; d >= 0; d--) { s.stride[d] = total; total *= s.gn[d]; }
    if (load_doubles(o_t, s.t, s.D, "t") < 0) return NULL;
    if (s.F > 0 && load_doubles(o_tf, s.tf, s.F, "tf") < 0) return NULL;
    s.C = s.F > 0 ? s.F / 2 : 1;
    if (s.maxnorm && s.F == 0) {
        PyErr_SetString(PyExc_ValueError, "kernel.search: the max norm needs full effects");
        return NULL;
    }
    Buf rows, start, co, full, pos, item, cap, mag, mag2s, mass, stock;
    Buf *all[] = {&rows, &start, &co, &full, &pos, &item, &cap, &mag, &mag2s, &mass, &stock};
    for (size_t j = 0; j < sizeof all / sizeof all[0]; j++) memset(all[j], 0, sizeof(Buf));
    PyObject *result = NULL;
    int64_t *counts = NULL;
    if (get_buf(o_rows, &rows, NULL, 1, "rows") < 0 || get_buf(o_start, &start, NULL, 1, "start") < 0 ||
        get_buf(o_co, &co, "d", 8, "coords") < 0 || get_buf(o_full, &full, "d", 8, "full") < 0 ||
        get_buf(o_pos, &pos, "qlL", 8, "pos") < 0 || get_buf(o_item, &item, "qlL", 8, "item") < 0 ||
        get_buf(o_cap, &cap, "qlL", 8, "cap") < 0 || get_buf(o_mag, &mag, "d", 8, "mag") < 0 ||
        get_buf(o_mag2s, &mag2s, "d", 8, "mag2s") < 0 || get_buf(o_mass, &mass, "d", 8, "mass") < 0 ||
        get_buf(o_stock, &stock, "qlL", 8, "stock") < 0)
        goto done;
    s.n = pos.view.len / 8;
    if (co.view.len != s.n * s.D * 8 || (s.F && full.view.len != s.n * s.F * 8) ||
        rows.view.len != n_rows * s.w * 4 || start.view.len != (total + 1) * 4 ||
        mag.view.len != s.n * 8 || mag2s.view.len != s.n * 8 || mass.view.len != s.n * 8 ||
        cap.view.len != n_positions * 8) {
        PyErr_SetString(PyExc_ValueError, "kernel.search: buffers do not match");
        goto done;
    }
    s.rows = rows.view.buf; s.start = start.view.buf; s.co = co.view.buf; s.full = full.view.buf;
    s.pos = pos.view.buf; s.item = item.view.buf; s.cap = cap.view.buf; s.mag = mag.view.buf;
    s.mag2s = mag2s.view.buf; s.mass = mass.view.buf; s.stock = stock.view.buf;
    Py_ssize_t n_items = stock.view.len / 8;
    counts = calloc((size_t)(n_positions + n_items + 1), sizeof(int64_t));
    if (!counts) { PyErr_NoMemory(); goto done; }
    /* A table that stays in the processor's caches gains nothing from fetching ahead,
     * and small jobs would pay for the second pass. */
    s.fetch_ahead = (double)n_rows * s.w * sizeof(int32_t) > (double)fetch_bytes;
    s.next = malloc(sizeof(Next) * (size_t)(s.n + 1));
    if (!s.next) { PyErr_NoMemory(); goto done; }
    s.pcnt = counts;
    s.icnt = counts + n_positions;
    s.hsize = s.k - s.w;
    s.sorted_depth = 1;
    s.limit = limit;
    s.next_tick = WORK_TICK;
    if (s.lightest) {
        s.radius = bound;
        double r2 = s.maxnorm ? s.C * bound * bound - s.perp2 : bound * bound - s.perp2;
        if (r2 < 0) {
            /* Nothing in the span can come within the radius. */
            result = Py_BuildValue("(iOddL)", 0, Py_None, 0.0, 0.0, (long long)0);
            goto done;
        }
        s.radius_par2 = r2 * (1.0 + 1e-12);
        s.wmin = INFINITY;
        for (Py_ssize_t i = 0; i < s.n; i++)
            if (s.stock[s.item[i]] > 0 && s.mass[i] < s.wmin) s.wmin = s.mass[i];
        if (!isfinite(s.wmin)) s.wmin = 0.0;
    } else {
        s.U = bound;
        double r2 = s.maxnorm ? s.C * bound * bound - s.perp2 : bound * bound - s.perp2;
        s.Upar2 = r2 > 0 ? r2 : 0.0;
        if (!(r2 > 0)) {
            result = Py_BuildValue("(iOddL)", 0, Py_None, 0.0, 0.0, (long long)0);
            goto done;
        }
    }
    double qf[MAXF];
    for (int f = 0; f < s.F; f++) qf[f] = s.tf[f];
    dfs(&s, 0, 0, s.t, qf, 0.0);
    if (s.status == ST_ERROR) goto done;
    if (s.status == ST_BUDGET) {
        result = Py_BuildValue("(iOddL)", 1, Py_None, 0.0, 0.0, (long long)s.work);
        goto done;
    }
    if (!s.have) {
        result = Py_BuildValue("(iOddL)", 0, Py_None, 0.0, 0.0, (long long)s.work);
        goto done;
    }
    PyObject *best = PyTuple_New(s.k);
    if (!best) goto done;
    for (int j = 0; j < s.k; j++) PyTuple_SET_ITEM(best, j, PyLong_FromLong(s.best[j]));
    result = Py_BuildValue("(iNddL)", s.status == ST_STOP ? ST_STOP : 0, best,
                           s.lightest ? s.best_val : s.U,
                           s.lightest ? s.best_mass : 0.0, (long long)s.work);
done:
    free(counts);
    free(s.next);
    for (size_t j = 0; j < sizeof all / sizeof all[0]; j++) rel_buf(all[j]);
    return result;
}

static PyMethodDef methods[] = {
    {"build", k_build, METH_VARARGS, "Tabulate the feasible tails in a uniform grid."},
    {"search", k_search, METH_VARARGS, "Exact head-and-tail search over a grid."},
    {NULL, NULL, 0, NULL}};

static struct PyModuleDef module = {PyModuleDef_HEAD_INIT, "_kernel",
                                    "Compiled core of placer's exact search.", -1, methods};

PyMODINIT_FUNC PyInit__kernel(void) { return PyModule_Create(&module); }
