# SPDX-License-Identifier: MIT
# Automake fragment of src/model, included by Makefile.am.
