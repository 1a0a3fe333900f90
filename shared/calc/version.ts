/**
 * The engine's version, stored beside every result the server computes (sheet_revisions.engine_version), so a
 * checker can tell which engine produced a stored result. Bump it whenever a change to shared/calc/ can change a
 * result: the minor number for new fields, the major number when an existing value can change, the patch number
 * when only the wording of a step's sentence (`steps[].text`) changes (1.0.1: the feedback steps' sentences in
 * words, without TeX).
 */
export const ENGINE_VERSION = '1.0.1'
