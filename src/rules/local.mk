# SPDX-License-Identifier: MIT
# Automake fragment of src/rules, included by Makefile.am.
