/* SPDX-License-Identifier: MIT */
/*
 * screen.h - screening one specimen: from the record to a verdict.
 *
 * Builds the specimen's timeline from its times and storage, runs every
 * mechanism that is built (metabolism for now) and the consistency checks,
 * estimates the bias of the pO2 reading with its interval, and applies the
 * disposition policy of the settings. Input problems that do not stop the
 * verdict become warnings in the verdict.
 */
#ifndef SX_SCREEN_H
#define SX_SCREEN_H

#include "core/record.h"
#include "model/settings.h"
#include "model/verdict.h"

sx_status sx_screen_specimen(const sx_specimen *specimen, const sx_settings *settings,
			     sx_verdict *verdict);

#endif
