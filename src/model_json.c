/* model_json.c - placeholder until the module lands.
 * SPDX-License-Identifier: MIT */
