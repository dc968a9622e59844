/* check.c - placeholder until the module lands.
 * SPDX-License-Identifier: MIT */
