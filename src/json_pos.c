/* json_pos.c - line and column of a field path in raw JSON text, for
 * error messages about values that a JSON parser accepted.
 * SPDX-License-Identifier: MIT */
#include <stddef.h>
#include <string.h>

#include "json_pos.h"

/* jansson keeps the line and column of syntax errors only; once a document
 * is parsed its values carry no position. To say where a semantically bad
 * value sits (a negative sd, an unknown resource), the readers remember the
 * path of member names and array indices that led to it, and this small
 * scanner follows that path through the raw text, which jansson has already
 * accepted as valid JSON with unique keys, to the value or key it names. */

static const char *skip_ws(const char *p)
{
    while (*p == ' ' || *p == '\t' || *p == '\n' || *p == '\r')
        p++;
    return p;
}

/* p at the opening quote; returns the byte after the closing quote. */
static const char *skip_string(const char *p)
{
    p++;
    while (*p && *p != '"') {
        if (*p == '\\' && p[1])
            p++;
        p++;
    }
    return *p ? p + 1 : p;
}

static const char *skip_value(const char *p)
{
    if (*p == '"')
        return skip_string(p);
    if (*p == '{' || *p == '[') {
        int depth = 0;
        do {
            if (*p == '"') {
                p = skip_string(p);
                continue;
            }
            if (*p == '{' || *p == '[')
                depth++;
            else if (*p == '}' || *p == ']')
                depth--;
            p++;
        } while (*p && depth > 0);
        return p;
    }
    while (*p && !strchr(",]} \t\r\n", *p))
        p++;
    return p;
}

static unsigned hex4(const char *p)
{
    unsigned v = 0;
    for (int i = 0; i < 4; i++) {
        char c = p[i];
        v <<= 4;
        if (c >= '0' && c <= '9')
            v |= (unsigned)(c - '0');
        else if (c >= 'a' && c <= 'f')
            v |= (unsigned)(c - 'a' + 10);
        else if (c >= 'A' && c <= 'F')
            v |= (unsigned)(c - 'A' + 10);
    }
    return v;
}

/* Whether the JSON string at p (opening quote) decodes to `key`, the UTF-8
 * text jansson produced; *end receives the byte after the closing quote. */
static int key_equals(const char *p, const char *key, const char **end)
{
    const unsigned char *k = (const unsigned char *)key;
    int same = 1;
    p++;
    while (*p && *p != '"') {
        unsigned char buf[4];
        size_t len = 1;
        if (*p != '\\') {
            buf[0] = (unsigned char)*p++;
        } else {
            char e = p[1];
            p += 2;
            switch (e) {
            case 'b': buf[0] = '\b'; break;
            case 'f': buf[0] = '\f'; break;
            case 'n': buf[0] = '\n'; break;
            case 'r': buf[0] = '\r'; break;
            case 't': buf[0] = '\t'; break;
            case 'u': {
                unsigned cp = hex4(p);
                p += 4;
                if (cp >= 0xD800 && cp < 0xDC00 && p[0] == '\\' && p[1] == 'u') {
                    unsigned lo = hex4(p + 2);
                    p += 6;
                    cp = 0x10000 + ((cp - 0xD800) << 10) + (lo - 0xDC00);
                }
                if (cp < 0x80) {
                    buf[0] = (unsigned char)cp;
                } else if (cp < 0x800) {
                    buf[0] = (unsigned char)(0xC0 | (cp >> 6));
                    buf[1] = (unsigned char)(0x80 | (cp & 0x3F));
                    len = 2;
                } else if (cp < 0x10000) {
                    buf[0] = (unsigned char)(0xE0 | (cp >> 12));
                    buf[1] = (unsigned char)(0x80 | ((cp >> 6) & 0x3F));
                    buf[2] = (unsigned char)(0x80 | (cp & 0x3F));
                    len = 3;
                } else {
                    buf[0] = (unsigned char)(0xF0 | (cp >> 18));
                    buf[1] = (unsigned char)(0x80 | ((cp >> 12) & 0x3F));
                    buf[2] = (unsigned char)(0x80 | ((cp >> 6) & 0x3F));
                    buf[3] = (unsigned char)(0x80 | (cp & 0x3F));
                    len = 4;
                }
                break;
            }
            default: buf[0] = (unsigned char)e; break; /* " \ / */
            }
        }
        for (size_t i = 0; i < len && same; i++) {
            if (*k != buf[i])
                same = 0;
            else
                k++;
        }
    }
    *end = *p ? p + 1 : p;
    return same && *k == '\0';
}

/* Follows `depth` steps of `path` from the document root. Returns the
 * start of the value reached (or of its key when want_key and the last
 * step is a member), or NULL when the path is not in the text. */
const char *surety_jsonpos_locate(const char *text,
                                  const surety_jsonpos_step *path, int depth,
                                  int want_key)
{
    const char *p = skip_ws(text);
    const char *key_at = NULL;
    for (int d = 0; d < depth; d++) {
        key_at = NULL;
        if (path[d].key) {
            if (*p != '{')
                return NULL;
            p = skip_ws(p + 1);
            while (*p == '"') {
                const char *k = p;
                int eq = key_equals(p, path[d].key, &p);
                p = skip_ws(p);
                if (*p != ':')
                    return NULL;
                p = skip_ws(p + 1);
                if (eq) {
                    key_at = k;
                    break;
                }
                p = skip_ws(skip_value(p));
                if (*p == ',')
                    p = skip_ws(p + 1);
            }
            if (!key_at)
                return NULL;
        } else {
            if (*p != '[')
                return NULL;
            p = skip_ws(p + 1);
            for (size_t i = 0; i < path[d].index; i++) {
                if (*p == ']' || *p == '\0')
                    return NULL;
                p = skip_ws(skip_value(p));
                if (*p == ',')
                    p = skip_ws(p + 1);
            }
            if (*p == ']' || *p == '\0')
                return NULL;
        }
    }
    return want_key && key_at ? key_at : p;
}

/* 1-based line and column of p; columns count characters (UTF-8 lead
 * bytes), as jansson's own error positions do. */
void surety_jsonpos_position(const char *text, const char *p, int *line,
                             int *col)
{
    int l = 1, c = 1;
    for (const char *q = text; q < p; q++) {
        if (*q == '\n') {
            l++;
            c = 1;
        } else if (((unsigned char)*q & 0xC0) != 0x80) {
            c++;
        }
    }
    *line = l;
    *col = c;
}
