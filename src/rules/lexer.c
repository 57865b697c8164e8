/* SPDX-License-Identifier: MIT */
/*
 * lexer.c - reading the rule language's tokens (see lexer.h).
 */
#include "rules/lexer.h"

#include <stdio.h>
#include <string.h>

#include "core/sxtime.h"
#include "core/units.h"

static const char *const keywords[] = {
	"version", "base", "include", "set", "limit", "sensitivity", "reason", "classify",
	"from", "codes", "rule", "replace", "drop", "if", "apply", "with", "bias",
	"disposition", "final", "end", "and", "or", "not", "in", "is", "present", "absent",
	"matches", "of", "to", NULL,
};

bool sx_lex_is_keyword(const char *s, size_t len)
{
	for (size_t i = 0; keywords[i]; i++)
		if (strlen(keywords[i]) == len && memcmp(keywords[i], s, len) == 0)
			return true;
	return false;
}

void sx_lex_init(sx_lexer *lx, const char *text, size_t len)
{
	lx->text = text;
	lx->len = len;
	lx->pos = 0;
}

static bool is_alpha(int c)
{
	return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
}

static bool is_digit(int c)
{
	return c >= '0' && c <= '9';
}

static sx_token error_at(size_t off, size_t len, const char *why, size_t where)
{
	sx_token t;
	memset(&t, 0, sizeof t);
	t.kind = TK_ERROR;
	t.off = off;
	t.len = len;
	t.error = why;
	t.error_off = where;
	return t;
}

static sx_token simple(sx_tok_kind k, size_t off, size_t len)
{
	sx_token t;
	memset(&t, 0, sizeof t);
	t.kind = k;
	t.off = off;
	t.len = len;
	return t;
}

/* Skip spaces, tabs, CR, newlines and comments. */
static void skip_space(sx_lexer *lx)
{
	while (lx->pos < lx->len) {
		char c = lx->text[lx->pos];
		if (c == ' ' || c == '\t' || c == '\r' || c == '\n') {
			lx->pos++;
		} else if (c == '#') {
			while (lx->pos < lx->len && lx->text[lx->pos] != '\n')
				lx->pos++;
		} else {
			break;
		}
	}
}

static sx_token lex_number(sx_lexer *lx)
{
	const char *s = lx->text;
	size_t start = lx->pos, i = start;
	sx_token t;

	if (s[i] == '-' || s[i] == '+')
		i++;
	while (i < lx->len && is_digit(s[i]))
		i++;
	if (i < lx->len && s[i] == '.') {
		i++;
		while (i < lx->len && is_digit(s[i]))
			i++;
	}
	if (i < lx->len && (s[i] == 'e' || s[i] == 'E')) {
		size_t j = i + 1;
		if (j < lx->len && (s[j] == '-' || s[j] == '+'))
			j++;
		if (j < lx->len && is_digit(s[j])) {
			i = j;
			while (i < lx->len && is_digit(s[i]))
				i++;
		}
	}
	lx->pos = i;
	t = simple(TK_NUMBER, start, i - start);
	switch (sx_parse_number(s + start, i - start, &t.number)) {
	case SX_OK:
		break;
	case SX_ERANGE:
		return error_at(start, i - start, "number too large or too small", start);
	case SX_ELIMIT:
		return error_at(start, i - start, "number with too many digits", start);
	default:
		return error_at(start, i - start, "not a number", start);
	}
	return t;
}

static sx_token lex_string(sx_lexer *lx)
{
	const char *s = lx->text;
	size_t start = lx->pos, i = start + 1;
	sx_token t;
	size_t bad = 0;
	bool has_bad = false;
	while (i < lx->len && s[i] != '"' && s[i] != '\n') {
		if (s[i] == '\\') {
			if (i + 1 >= lx->len || (s[i + 1] != '"' && s[i + 1] != '\\')) {
				if (!has_bad)
					bad = i;
				has_bad = true;
			} else {
				i++;
			}
		}
		i++;
	}
	if (i >= lx->len || s[i] != '"') {
		lx->pos = i;
		return error_at(start, i - start, "string not closed on this line", start);
	}
	lx->pos = i + 1;
	if (has_bad)
		return error_at(start, i + 1 - start,
				"unknown escape in a string (only \\\" and \\\\)", bad);
	t = simple(TK_STRING, start, i + 1 - start);
	t.inner_off = start + 1;
	t.inner_len = i - start - 1;
	return t;
}

/* [+-]hh:mm */
static bool looks_like_offset(const sx_lexer *lx, size_t i)
{
	const char *s = lx->text;
	return i + 6 <= lx->len && (s[i] == '+' || s[i] == '-') && is_digit(s[i + 1]) &&
	       is_digit(s[i + 2]) && s[i + 3] == ':' && is_digit(s[i + 4]) && is_digit(s[i + 5]) &&
	       !(i + 6 < lx->len && (is_digit(s[i + 6]) || is_alpha(s[i + 6])));
}

sx_token sx_lex_next(sx_lexer *lx)
{
	const char *s = lx->text;
	size_t start;
	char c, d;

	skip_space(lx);
	start = lx->pos;
	if (start >= lx->len)
		return simple(TK_EOF, start, 0);
	c = s[start];
	d = start + 1 < lx->len ? s[start + 1] : '\0';
	if (is_alpha(c)) {
		size_t i = start + 1;
		while (i < lx->len && (is_alpha(s[i]) || is_digit(s[i]) || s[i] == '-' || s[i] == '.'))
			i++;
		while (s[i - 1] == '-' || s[i - 1] == '.')
			i--; /* a name does not end in - or . */
		lx->pos = i;
		return simple(TK_NAME, start, i - start);
	}
	if (looks_like_offset(lx, start)) {
		char buf[8];
		sx_token t = simple(TK_OFFSET, start, 6);
		memcpy(buf, s + start, 6);
		buf[6] = '\0';
		lx->pos = start + 6;
		if (sx_parse_offset(buf, &t.offset_min) != SX_OK)
			return error_at(start, 6, "not a UTC offset (-14:00 to +14:00)", start);
		return t;
	}
	if (is_digit(c) || ((c == '-' || c == '+') && (is_digit(d) || d == '.')) ||
	    (c == '.' && is_digit(d)))
		return lex_number(lx);
	lx->pos = start + 1;
	switch (c) {
	case '"':
		lx->pos = start;
		return lex_string(lx);
	case '(':
		return simple(TK_LPAREN, start, 1);
	case ')':
		return simple(TK_RPAREN, start, 1);
	case '{':
		return simple(TK_LBRACE, start, 1);
	case '}':
		return simple(TK_RBRACE, start, 1);
	case ',':
		return simple(TK_COMMA, start, 1);
	case '*':
		return simple(TK_STAR, start, 1);
	case '/':
		return simple(TK_SLASH, start, 1);
	case '=':
		if (d == '=') {
			lx->pos++;
			return simple(TK_EQ, start, 2);
		}
		return simple(TK_ASSIGN, start, 1);
	case '!':
		if (d == '=') {
			lx->pos++;
			return simple(TK_NE, start, 2);
		}
		break;
	case '<':
		if (d == '=') {
			lx->pos++;
			return simple(TK_LE, start, 2);
		}
		return simple(TK_LT, start, 1);
	case '>':
		if (d == '=') {
			lx->pos++;
			return simple(TK_GE, start, 2);
		}
		return simple(TK_GT, start, 1);
	case '-':
		if (d == '>') {
			lx->pos++;
			return simple(TK_ARROW, start, 2);
		}
		break;
	default:
		break;
	}
	/* one whole character, so a caret sits under it and the message can quote it */
	{
		size_t i = start + 1;
		while (i < lx->len && ((unsigned char)s[i] & 0xC0) == 0x80)
			i++;
		lx->pos = i;
		return error_at(start, i - start, "unexpected character", start);
	}
}

sx_token sx_lex_regex(sx_lexer *lx, size_t slash)
{
	const char *s = lx->text;
	size_t i = slash + 1, end;
	sx_token t;

	while (i < lx->len && s[i] != '/' && s[i] != '\n') {
		if (s[i] == '\\' && i + 1 < lx->len && s[i + 1] != '\n')
			i++;
		i++;
	}
	if (i >= lx->len || s[i] != '/') {
		lx->pos = i;
		return error_at(slash, i - slash,
				"regular expression not closed on this line (write \\/ for a "
				"slash inside it)",
				slash);
	}
	end = i + 1;
	t = simple(TK_REGEX, slash, 0);
	t.inner_off = slash + 1;
	t.inner_len = i - slash - 1;
	while (end < lx->len && (is_alpha(s[end]) || is_digit(s[end]))) {
		if (s[end] == 'i') {
			t.flags |= SX_REGEX_CASELESS;
		} else {
			lx->pos = end + 1;
			return error_at(slash, end + 1 - slash,
					"unknown flag after a regular expression (only i, "
					"ignore case)",
					end);
		}
		end++;
	}
	t.len = end - slash;
	lx->pos = end;
	return t;
}

static bool unit_start(const char *s, size_t i, size_t len)
{
	unsigned char c = (unsigned char)s[i];
	if (is_alpha(c) || c == '%' || c == '/' || c == '[')
		return true;
	/* degree sign, micro sign (U+00B0, U+00B5), Greek mu (U+03BC) */
	if (c == 0xC2 && i + 1 < len &&
	    ((unsigned char)s[i + 1] == 0xB0 || (unsigned char)s[i + 1] == 0xB5))
		return true;
	if (c == 0xCE && i + 1 < len && (unsigned char)s[i + 1] == 0xBC)
		return true;
	return false;
}

static bool unit_char(char c)
{
	return !(c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == ',' || c == '(' ||
		 c == ')' || c == '{' || c == '}' || c == '#' || c == '"' || c == '=' ||
		 c == '<' || c == '>' || c == '!');
}

bool sx_lex_unit(const sx_lexer *lx, size_t end, size_t *off, size_t *len)
{
	const char *s = lx->text;
	size_t i = end, j;
	bool digit_unit = false;

	while (i < lx->len && (s[i] == ' ' || s[i] == '\t'))
		i++;
	if (i >= lx->len)
		return false;
	if (is_digit(s[i])) {
		/* 10*9/L, 10^9/L: digits then * or ^ */
		j = i;
		while (j < lx->len && is_digit(s[j]))
			j++;
		digit_unit = j < lx->len && (s[j] == '*' || s[j] == '^') && j + 1 < lx->len &&
			     is_digit(s[j + 1]);
		if (!digit_unit)
			return false;
	} else if (!unit_start(s, i, lx->len)) {
		return false;
	}
	j = i;
	while (j < lx->len && unit_char(s[j]))
		j++;
	if (sx_lex_is_keyword(s + i, j - i))
		return false;
	*off = i;
	*len = j - i;
	return true;
}

void sx_lex_describe(const sx_lexer *lx, const sx_token *t, char *buf, size_t size)
{
	size_t n = t->len > 24 ? 24 : t->len;
	switch (t->kind) {
	case TK_EOF:
		snprintf(buf, size, "the end of the file");
		return;
	case TK_STRING:
		snprintf(buf, size, "a string");
		return;
	case TK_REGEX:
		snprintf(buf, size, "a regular expression");
		return;
	case TK_NUMBER:
		snprintf(buf, size, "the number %.*s", (int)n, lx->text + t->off);
		return;
	default:
		snprintf(buf, size, "'%.*s'%s", (int)n, lx->text + t->off, t->len > n ? "..." : "");
		return;
	}
}
