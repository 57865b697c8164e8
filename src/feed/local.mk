# SPDX-License-Identifier: MIT
# Automake fragment of src/feed, included by Makefile.am.
