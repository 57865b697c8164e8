/* SPDX-License-Identifier: MIT */
/*
 * lexer.h - tokens of the rule language.
 *
 * The lexer is pure: it never reports. A token it cannot read is TK_ERROR with
 * a constant sentence and the offset of the offending byte; the parser turns
 * it into a diagnostic when it meets it. Tokens keep byte offsets.
 *
 * Three things are read only where the parser asks for them, because their
 * characters mean something else elsewhere: a regular expression /.../i (at a
 * '/' where a pattern is expected), a unit after a number on the same line
 * ("30 min", "100 x10^9/L", "7.5 %"), and an offset "+01:00".
 */
#ifndef SX_RULES_LEXER_H
#define SX_RULES_LEXER_H

#include <stdbool.h>
#include <stddef.h>

typedef enum sx_tok_kind {
	TK_EOF = 0,
	TK_NAME,      /* letters, digits, _ - . ; starts with a letter or _ */
	TK_NUMBER,    /* 12, -4, 0.075, 1e-3 */
	TK_STRING,    /* "..." on one line; \" and \\ inside */
	TK_REGEX,     /* /.../flags (only from sx_lex_regex) */
	TK_OFFSET,    /* +01:00, -05:30 */
	TK_LPAREN,
	TK_RPAREN,
	TK_LBRACE,
	TK_RBRACE,
	TK_COMMA,
	TK_ASSIGN,    /* = */
	TK_EQ,        /* == */
	TK_NE,        /* != */
	TK_LT,
	TK_LE,
	TK_GT,
	TK_GE,
	TK_ARROW,     /* -> */
	TK_STAR,      /* * */
	TK_SLASH,     /* / (where a regular expression may start) */
	TK_ERROR,
} sx_tok_kind;

typedef struct sx_token {
	sx_tok_kind kind;
	size_t off, len;          /* the token's bytes in the text */
	double number;            /* TK_NUMBER */
	int offset_min;           /* TK_OFFSET */
	size_t inner_off, inner_len; /* TK_STRING: between the quotes; TK_REGEX: the pattern */
	unsigned flags;           /* TK_REGEX: SX_REGEX_* */
	const char *error;        /* TK_ERROR: what is wrong */
	size_t error_off;         /* TK_ERROR: the byte it points at */
} sx_token;

#define SX_REGEX_CASELESS 1u

typedef struct sx_lexer {
	const char *text;
	size_t len, pos;
} sx_lexer;

void sx_lex_init(sx_lexer *lx, const char *text, size_t len);
/* The next token from lx->pos (comments and white space skipped). */
sx_token sx_lex_next(sx_lexer *lx);
/* Read a regular expression starting at the '/' at offset; lx->pos moves
 * past it. */
sx_token sx_lex_regex(sx_lexer *lx, size_t slash);
/* Is there a unit right after a number that ends at offset end (same line)?
 * Sets its span; does not move. Keywords (and, or, of, to, ...) are never
 * units. */
bool sx_lex_unit(const sx_lexer *lx, size_t end, size_t *off, size_t *len);
/* Whether a name is one of the language's words (never a unit, never a name
 * a ruleset may define). */
bool sx_lex_is_keyword(const char *s, size_t len);
/* A short description of a token for "expected ..., found X" messages. */
void sx_lex_describe(const sx_lexer *lx, const sx_token *t, char *buf, size_t size);

#endif
