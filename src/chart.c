/* chart.c - SVG and PNG charts through cairo (the only cairo user): the
 * profit-reliability frontier and each resource's load against capacity.
 * SPDX-License-Identifier: MIT */
#include "surety_config.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "alloc.h"
#include "fileio.h"
#include "model.h"
#include "plan.h"
#include "sample.h"

#if SURETY_HAVE_CAIRO

#include <cairo-svg.h>
#include <cairo.h>

int surety_chart_available(void)
{
    return 1;
}

/* Plain styling: white ground, grey grid, one accent colour per role.
 * Markers use a colour no other element uses, so a reader (or a test) can
 * tell the points from the rest of the drawing. */
static const double INK[3] = {0.13, 0.13, 0.13};
static const double GRID[3] = {0.87, 0.87, 0.87};
static const double POINT[3] = {0.10, 0.35, 0.65};
static const double BAR[3] = {0.45, 0.62, 0.80};
static const double OVER[3] = {0.85, 0.40, 0.20};
static const double LIMIT[3] = {0.75, 0.10, 0.10};

static void rgb(cairo_t *cr, const double c[3])
{
    cairo_set_source_rgb(cr, c[0], c[1], c[2]);
}

/* A plotting frame: data rectangle [x0,x1]x[y0,y1] mapped to the device
 * box left..right, top..bottom (y grows downward on the device). */
typedef struct frame {
    double left, top, right, bottom;
    double x0, x1, y0, y1;
} frame;

static double fx(const frame *f, double x)
{
    return f->left + (x - f->x0) / (f->x1 - f->x0) * (f->right - f->left);
}

static double fy(const frame *f, double y)
{
    return f->bottom - (y - f->y0) / (f->y1 - f->y0) * (f->bottom - f->top);
}

/* Tick spacing of 1, 2 or 5 times a power of ten giving about `want`
 * intervals over [lo, hi]. */
static double nice_step(double lo, double hi, int want)
{
    double raw = (hi - lo) / want;
    if (!(raw > 0))
        return 1;
    double p = pow(10, floor(log10(raw)));
    double r = raw / p;
    return (r < 1.5 ? 1 : r < 3.5 ? 2 : r < 7.5 ? 5 : 10) * p;
}

static void fmt_tick(char *buf, size_t len, double v, double step)
{
    int dec = step >= 1 ? 0 : (int)ceil(-log10(step) - 1e-9);
    if (dec > 6)
        dec = 6;
    if (fabs(v) < 0.5 * step)
        v = 0;
    snprintf(buf, len, "%.*f", dec, v);
}

static void text_at(cairo_t *cr, double x, double y, const char *s, double ax, double ay)
{
    cairo_text_extents_t e;
    cairo_text_extents(cr, s, &e);
    cairo_move_to(cr, x - ax * e.width - e.x_bearing, y - ay * e.height - e.y_bearing);
    cairo_show_text(cr, s);
}

/* Widens [lo, hi] to whole ticks, with a floor on the width. */
static void pad_range(double *lo, double *hi, double min_width)
{
    if (!(*hi - *lo >= min_width)) {
        double c = 0.5 * (*lo + *hi);
        *lo = c - 0.5 * min_width;
        *hi = c + 0.5 * min_width;
    }
    double step = nice_step(*lo, *hi, 5);
    *lo = floor(*lo / step) * step;
    *hi = ceil(*hi / step) * step;
}

static void draw_axes(cairo_t *cr, const frame *f, const char *xlabel, const char *ylabel)
{
    char buf[64];
    cairo_set_line_width(cr, 0.8);
    cairo_set_font_size(cr, 11);
    double sx = nice_step(f->x0, f->x1, 6), sy = nice_step(f->y0, f->y1, 5);
    for (double x = ceil(f->x0 / sx - 1e-9) * sx; x <= f->x1 + 1e-9 * sx; x += sx) {
        rgb(cr, GRID);
        cairo_move_to(cr, fx(f, x), f->top);
        cairo_line_to(cr, fx(f, x), f->bottom);
        cairo_stroke(cr);
        rgb(cr, INK);
        fmt_tick(buf, sizeof buf, x, sx);
        text_at(cr, fx(f, x), f->bottom + 6, buf, 0.5, 0);
    }
    for (double y = ceil(f->y0 / sy - 1e-9) * sy; y <= f->y1 + 1e-9 * sy; y += sy) {
        rgb(cr, GRID);
        cairo_move_to(cr, f->left, fy(f, y));
        cairo_line_to(cr, f->right, fy(f, y));
        cairo_stroke(cr);
        rgb(cr, INK);
        fmt_tick(buf, sizeof buf, y, sy);
        text_at(cr, f->left - 6, fy(f, y), buf, 1, 0.5);
    }
    rgb(cr, INK);
    cairo_rectangle(cr, f->left, f->top, f->right - f->left, f->bottom - f->top);
    cairo_stroke(cr);
    cairo_set_font_size(cr, 12);
    text_at(cr, 0.5 * (f->left + f->right), f->bottom + 24, xlabel, 0.5, 0);
    cairo_save(cr);
    cairo_translate(cr, f->left - 50, 0.5 * (f->top + f->bottom));
    cairo_rotate(cr, -M_PI / 2);
    text_at(cr, 0, 0, ylabel, 0.5, 0.5);
    cairo_restore(cr);
}

static cairo_status_t write_fp(void *closure, const unsigned char *data, unsigned int len)
{
    FILE *fp = closure;
    return fwrite(data, 1, len, fp) == len ? CAIRO_STATUS_SUCCESS : CAIRO_STATUS_WRITE_ERROR;
}

typedef void (*draw_fn)(cairo_t *cr, const void *ctx);

/* Renders `draw` on a width x height page (points) into `path`: SVG as
 * vectors, PNG at 1.5 pixels per point so text stays sharp. Atomic. */
static surety_code render(surety_chart_format fmt, const char *path, double width,
                          double height, draw_fn draw, const void *ctx, surety_error *err)
{
    surety_outfile f;
    surety_code code = surety_outfile_open(&f, path, err);
    if (code)
        return code;
    cairo_surface_t *surf;
    double scale = fmt == SURETY_CHART_PNG ? 1.5 : 1.0;
    if (fmt == SURETY_CHART_PNG)
        surf = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)(width * scale),
                                          (int)(height * scale));
    else
        surf = cairo_svg_surface_create_for_stream(write_fp, f.fp, width, height);
    cairo_t *cr = cairo_create(surf);
    cairo_scale(cr, scale, scale);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_paint(cr);
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
    draw(cr, ctx);
    cairo_status_t st = cairo_status(cr);
    cairo_destroy(cr);
    if (fmt == SURETY_CHART_PNG && st == CAIRO_STATUS_SUCCESS)
        st = cairo_surface_write_to_png_stream(surf, write_fp, f.fp);
    cairo_surface_finish(surf);
    if (st == CAIRO_STATUS_SUCCESS)
        st = cairo_surface_status(surf);
    cairo_surface_destroy(surf);
    if (st != CAIRO_STATUS_SUCCESS) {
        surety_outfile_abort(&f);
        surety_error_set(err, path, 0, 0, NULL, "drawing the chart failed: %s",
                         cairo_status_to_string(st));
        return SURETY_EINTERNAL;
    }
    return surety_outfile_commit(&f, err);
}

/* ---- frontier ---------------------------------------------------- */

typedef struct frontier_ctx {
    const surety_frontier_report *f;
    double target;
} frontier_ctx;

static void draw_frontier(cairo_t *cr, const void *vctx)
{
    const frontier_ctx *c = vctx;
    const surety_frontier_report *f = c->f;
    double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY, yhi = -INFINITY;
    for (size_t p = 0; p < f->npoints; p++) {
        const surety_frontier_point *pt = &f->point[p];
        if (!pt->plan || !isfinite(pt->profit_mean))
            continue;
        xlo = fmin(xlo, 100 * pt->lo);
        xhi = fmax(xhi, 100 * pt->hi);
        ylo = fmin(ylo, pt->profit_mean);
        yhi = fmax(yhi, pt->profit_mean);
    }
    if (c->target > 0) {
        xlo = fmin(xlo, 100 * c->target);
        xhi = fmax(xhi, 100 * c->target);
    }
    if (!isfinite(xlo)) {
        xlo = 90;
        xhi = 100;
        ylo = 0;
        yhi = 1;
    }
    pad_range(&xlo, &xhi, 0.5);
    pad_range(&ylo, &yhi, fmax(1e-6, 0.05 * fabs(yhi)));
    if (xhi > 100)
        xhi = 100;
    frame fr = {90, 50, 690, 400, xlo, xhi, ylo, yhi};
    rgb(cr, INK);
    cairo_set_font_size(cr, 15);
    text_at(cr, 360, 18, "Profit against reliability on fresh scenarios", 0.5, 0);
    draw_axes(cr, &fr, "reliability: share of fresh scenarios where every capacity holds (%)",
              "mean profit per plan (money units)");

    if (c->target > 0) {
        double x = fx(&fr, 100 * c->target);
        static const double dash[2] = {6, 4};
        cairo_set_dash(cr, dash, 2, 0);
        rgb(cr, LIMIT);
        cairo_set_line_width(cr, 1.5);
        cairo_move_to(cr, x, fr.top);
        cairo_line_to(cr, x, fr.bottom);
        cairo_stroke(cr);
        cairo_set_dash(cr, NULL, 0, 0);
        char buf[64];
        snprintf(buf, sizeof buf, "target %.4g%%", 100 * c->target);
        cairo_set_font_size(cr, 11);
        if (x > fr.right - 90)
            text_at(cr, x - 4, fr.top + 4, buf, 1, 0);
        else
            text_at(cr, x + 4, fr.top + 4, buf, 0, 0);
    }
    /* connecting line in order of risk, then interval bars, then markers */
    cairo_set_line_width(cr, 1);
    rgb(cr, BAR);
    int started = 0;
    size_t *ord = surety_xmalloc(f->npoints ? f->npoints : 1, sizeof *ord);
    if (ord) {
        for (size_t p = 0; p < f->npoints; p++)
            ord[p] = p;
        for (size_t a = 1; a < f->npoints; a++)
            for (size_t b = a; b > 0 && f->point[ord[b]].risk < f->point[ord[b - 1]].risk; b--) {
                size_t t = ord[b];
                ord[b] = ord[b - 1];
                ord[b - 1] = t;
            }
        for (size_t q = 0; q < f->npoints; q++) {
            const surety_frontier_point *pt = &f->point[ord[q]];
            if (!pt->plan || !isfinite(pt->profit_mean))
                continue;
            double x = fx(&fr, 100 * pt->reliability), y = fy(&fr, pt->profit_mean);
            if (started)
                cairo_line_to(cr, x, y);
            else
                cairo_move_to(cr, x, y);
            started = 1;
        }
        cairo_stroke(cr);
        surety_xfree(ord);
    }
    cairo_set_line_width(cr, 1.6);
    rgb(cr, INK);
    for (size_t p = 0; p < f->npoints; p++) {
        const surety_frontier_point *pt = &f->point[p];
        if (!pt->plan || !isfinite(pt->profit_mean))
            continue;
        double y = fy(&fr, pt->profit_mean);
        double a = fx(&fr, fmax(100 * pt->lo, xlo)), b = fx(&fr, fmin(100 * pt->hi, xhi));
        cairo_move_to(cr, a, y);
        cairo_line_to(cr, b, y);
        cairo_move_to(cr, a, y - 5);
        cairo_line_to(cr, a, y + 5);
        cairo_move_to(cr, b, y - 5);
        cairo_line_to(cr, b, y + 5);
        cairo_stroke(cr);
    }
    cairo_set_font_size(cr, 10);
    int unproven = 0;
    for (size_t p = 0; p < f->npoints; p++) {
        const surety_frontier_point *pt = &f->point[p];
        if (!pt->plan || !isfinite(pt->profit_mean))
            continue;
        double x = fx(&fr, 100 * pt->reliability), y = fy(&fr, pt->profit_mean);
        /* levels that returned the same point share one marker and one
         * label, so labels never print over each other */
        int shared = 0;
        for (size_t q = 0; q < p && !shared; q++) {
            const surety_frontier_point *o = &f->point[q];
            shared = o->plan && isfinite(o->profit_mean) &&
                     fabs(fx(&fr, 100 * o->reliability) - x) < 1.5 &&
                     fabs(fy(&fr, o->profit_mean) - y) < 1.5;
        }
        if (shared)
            continue;
        char buf[160];
        size_t len = (size_t)snprintf(buf, sizeof buf, "risk %.3g", pt->risk);
        for (size_t q = p + 1; q < f->npoints && len < sizeof buf - 16; q++) {
            const surety_frontier_point *o = &f->point[q];
            if (o->plan && isfinite(o->profit_mean) &&
                fabs(fx(&fr, 100 * o->reliability) - x) < 1.5 &&
                fabs(fy(&fr, o->profit_mean) - y) < 1.5)
                len += (size_t)snprintf(buf + len, sizeof buf - len, ", %.3g", o->risk);
        }
        if (pt->status != SURETY_OPTIMAL && len < sizeof buf - 2) {
            buf[len++] = '*';
            buf[len] = 0;
            unproven = 1;
        }
        rgb(cr, POINT);
        cairo_new_sub_path(cr);
        cairo_arc(cr, x, y, 4.5, 0, 2 * M_PI);
        cairo_fill(cr);
        rgb(cr, INK);
        text_at(cr, x + 7, y - 7, buf, 0, 1);
    }
    if (unproven) {
        cairo_set_font_size(cr, 10);
        rgb(cr, INK);
        text_at(cr, 90, 446, "* search stopped by a limit: the best plan found, not proven optimal.",
                0, 0);
    }
    char note[160];
    snprintf(note, sizeof note,
             "Dot: one plan per risk level (solved on %zu scenarios). Bar: its %.4g%% "
             "Clopper-Pearson interval.", f->N, 100 * f->confidence);
    cairo_set_font_size(cr, 10);
    rgb(cr, INK);
    text_at(cr, 90, 462, note, 0, 0);
}

surety_code surety_chart_frontier(const surety_frontier_report *f, double target,
                                  surety_chart_format fmt, const char *path, surety_error *err)
{
    if (!f || !path) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_chart_frontier: report and path needed");
        return SURETY_EUSAGE;
    }
    frontier_ctx c = {f, target};
    return render(fmt, path, 720, 480, draw_frontier, &c, err);
}

/* ---- loads against capacity -------------------------------------- */

enum { LOAD_BINS = 40, PANEL_W = 360, PANEL_H = 250, PANEL_COLS = 2 };

typedef struct loads_ctx {
    const surety_model *model;
    size_t M;
    const double *load; /* m*M, load[i*M + l], hours */
} loads_ctx;

static void draw_panel(cairo_t *cr, const loads_ctx *c, size_t i, double ox, double oy)
{
    const double *v = c->load + i * c->M;
    double cap = surety_model_capacity(c->model, i);
    double lo = INFINITY, hi = -INFINITY;
    size_t over = 0;
    for (size_t l = 0; l < c->M; l++) {
        lo = fmin(lo, v[l]);
        hi = fmax(hi, v[l]);
        over += !surety_plan_holds(1.0, v[l], cap);
    }
    lo = fmin(lo, cap);
    hi = fmax(hi, cap);
    double step = nice_step(lo, hi, 5);
    lo = floor(lo / step) * step;
    hi = ceil(hi / step) * step;
    if (!(hi > lo))
        hi = lo + 1;
    double width = (hi - lo) / LOAD_BINS;
    size_t count[LOAD_BINS] = {0};
    for (size_t l = 0; l < c->M; l++) {
        long b = (long)((v[l] - lo) / width);
        if (b < 0)
            b = 0;
        if (b >= LOAD_BINS)
            b = LOAD_BINS - 1;
        count[b]++;
    }
    double top = 0;
    for (int b = 0; b < LOAD_BINS; b++)
        top = fmax(top, 100.0 * (double)count[b] / (double)c->M);
    double ylo = 0, yhi = top > 0 ? top * 1.1 : 1;
    frame fr = {ox + 70, oy + 42, ox + PANEL_W - 15, oy + PANEL_H - 45, lo, hi, ylo, yhi};
    char title[200];
    snprintf(title, sizeof title, "%s: capacity %.4g h, overloaded in %.2f%%",
             surety_model_resource_id(c->model, i), cap,
             100.0 * (double)over / (double)c->M);
    rgb(cr, INK);
    cairo_set_font_size(cr, 12);
    text_at(cr, 0.5 * (fr.left + fr.right), oy + 14, title, 0.5, 0);
    draw_axes(cr, &fr, "load (hours)", "share of scenarios (%)");
    for (int b = 0; b < LOAD_BINS; b++) {
        if (!count[b])
            continue;
        double a = lo + b * width;
        rgb(cr, a >= cap ? OVER : BAR);
        double y = 100.0 * (double)count[b] / (double)c->M;
        cairo_rectangle(cr, fx(&fr, a) + 0.5, fy(&fr, y), fx(&fr, a + width) - fx(&fr, a) - 1,
                        fy(&fr, 0) - fy(&fr, y));
        cairo_fill(cr);
    }
    rgb(cr, LIMIT);
    cairo_set_line_width(cr, 2);
    cairo_move_to(cr, fx(&fr, cap), fr.top);
    cairo_line_to(cr, fx(&fr, cap), fr.bottom);
    cairo_stroke(cr);
}

static void draw_loads(cairo_t *cr, const void *vctx)
{
    const loads_ctx *c = vctx;
    size_t m = surety_model_resources(c->model);
    rgb(cr, INK);
    cairo_set_font_size(cr, 14);
    char head[160];
    snprintf(head, sizeof head,
             "Load per resource over %zu fresh scenarios (red line: capacity)", c->M);
    text_at(cr, 12, 10, head, 0, 0);
    for (size_t i = 0; i < m; i++)
        draw_panel(cr, c, i, (double)(i % PANEL_COLS) * PANEL_W,
                   30 + (double)(i / PANEL_COLS) * PANEL_H);
}

surety_code surety_chart_loads(const surety_model *model, const surety_plan *plan,
                               const surety_check_options *opt, surety_chart_format fmt,
                               const char *path, surety_error *err)
{
    if (!model || !plan || !path) {
        surety_error_set(err, NULL, 0, 0, NULL, "surety_chart_loads: model, plan and path needed");
        return SURETY_EUSAGE;
    }
    surety_check_options defaults;
    if (!opt) {
        surety_check_options_init(&defaults);
        opt = &defaults;
    }
    size_t n = surety_model_jobs(model), m = surety_model_resources(model);
    surety_scenarios *sc = NULL;
    surety_code code = surety_sample(model, opt->stream, opt->first, opt->samples, &sc, err);
    if (code)
        return code;
    size_t M = sc->N;
    double *load = surety_xcalloc(m * M > 0 ? m * M : 1, sizeof *load);
    if (!load) {
        surety_scenarios_free(sc);
        surety_error_set(err, NULL, 0, 0, NULL, "out of memory");
        return SURETY_EINTERNAL;
    }
    /* the project's one capacity test sums base hours in ascending job
     * order and multiplies by the factor (plan.h); the chart plots that
     * product, so its overload share matches surety_check's count */
    for (size_t l = 0; l < M; l++) {
        const double *w = sc->hours + l * n;
        for (size_t j = 0; j < n; j++) {
            long i = surety_plan_get(plan, j);
            if (i >= 0 && (size_t)i < m)
                load[(size_t)i * M + l] += w[j];
        }
    }
    for (size_t i = 0; i < m; i++) {
        double f = surety_model_hours_factor(model, i);
        for (size_t l = 0; l < M; l++)
            load[i * M + l] *= f;
    }
    surety_scenarios_free(sc);
    loads_ctx c = {model, M, load};
    size_t rows = (m + PANEL_COLS - 1) / PANEL_COLS;
    double width = (double)(m < PANEL_COLS ? m : PANEL_COLS) * PANEL_W;
    if (width < 480)
        width = 480;
    code = render(fmt, path, width, 30 + (double)(rows ? rows : 1) * PANEL_H, draw_loads, &c, err);
    surety_xfree(load);
    return code;
}

#else /* no cairo */

int surety_chart_available(void)
{
    return 0;
}

surety_code surety_chart_frontier(const surety_frontier_report *f, double target,
                                  surety_chart_format fmt, const char *path, surety_error *err)
{
    (void)f;
    (void)target;
    (void)fmt;
    surety_error_set(err, path, 0, 0, NULL, "this build of surety has no charts (cairo missing)");
    return SURETY_EUSAGE;
}

surety_code surety_chart_loads(const surety_model *model, const surety_plan *plan,
                               const surety_check_options *opt, surety_chart_format fmt,
                               const char *path, surety_error *err)
{
    (void)model;
    (void)plan;
    (void)opt;
    (void)fmt;
    surety_error_set(err, path, 0, 0, NULL, "this build of surety has no charts (cairo missing)");
    return SURETY_EUSAGE;
}

#endif
