/* export_mps.c - placeholder until the module lands.
 * SPDX-License-Identifier: MIT */
