/**
 * The role × route matrix: what every route answers every role and an anonymous visitor. Read by
 * tests/integration/route-matrix.test.ts, which fails when a route of app/routes.ts has no row here.
 *
 * Where the answers come from:
 * - who may do what: the permission map in shared/authz/permissions.ts (each loader and action names its
 *   permission; inspectors read only through their access grant; the _app layout refuses read-only roles every
 *   non-GET request but on the routes its ROUTE_POLICIES name, in app/.server/context.ts);
 * - how a refusal is said, per RFC 9110: 401 when the request carries no valid credentials (§15.5.2; the API, which
 *   adds WWW-Authenticate), a redirect to the sign-in page for the browser pages (`login`, the same "sign in first"
 *   for a person), 403 when the credentials are good but the roles do not allow it (§15.5.4), 404 for a record that
 *   does not exist or that an inspector's grant does not reveal (§15.5.5);
 * - what an allowed request answers: 200 for a page or a read, 302 for a redirect, 400 for the empty or incomplete
 *   form each action gets here (§15.5.1), 409 for a step the state of the version or run does not allow (§15.5.10),
 *   422 for a well-formed JSON body the API cannot use (RFC 9110 §15.5.21).
 *
 * Add a route: give it one row per method (GET when the module has a loader or a page, POST when it has an action),
 * with the URL written as a request would send it; `:name` stands for a fixture id (see `fixtures` in the test), and
 * a `#label` suffix (not sent) tells apart several rows of one route, e.g. one per intent or per record state.
 * A POST gets an empty form unless REQUESTS below says otherwise.
 */

export const MATRIX = `
method url                                                          anonymous author reviewer approver analyst inspector admin
// Public pages and better-auth's own endpoints
GET    /sign-in                                                     200       302    302      302      302     302       302
// A signed-in user posting the sign-in form is sent on, like the sign-in page does: its loader runs after the action.
POST   /sign-in                                                     400       302    302      302      302     302       302
GET    /sign-out                                                    302       302    302      302      302     302       302
POST   /sign-out                                                    302       302    302      302      302     302       302
GET    /api/auth/get-session                                        200       200    200      200      200     200       200
POST   /api/auth/sign-in/email                                      400       400    400      400      400     400       400
GET    /healthz                                                     200       200    200      200      200     200       200
GET    /no-such-page                                                404       404    404      404      404     404       404

// REST API v1 (API keys: read and write for lab staff, read only for an inspector)
GET    /api/v1/openapi.json                                         200       200    200      200      200     200       200
GET    /api/v1/materials                                            401       200    200      200      200     403       200
GET    /api/v1/specifications                                       401       200    200      200      200     403       200
GET    /api/v1/specifications/:specId                               401       200    200      200      200     403       200
GET    /api/v1/specifications/:unknownId                            401       404    404      404      404     403       404
POST   /api/v1/specifications/:specId/compare                       401       200    200      200      200     403       200
POST   /api/v1/specifications/:specId/compare#empty-body            401       422    422      422      422     403       422
GET    /api/v1/versions/:versionId                                  401       200    200      200      200     200       200
GET    /api/v1/versions/:draftVersionId                             401       200    200      200      200     404       200
GET    /api/v1/versions/:otherVersionId                             401       200    200      200      200     404       200
GET    /api/v1/versions/:unknownId                                  401       404    404      404      404     404       404
GET    /api/v1/versions/:versionId/bands                            401       200    200      200      200     200       200
GET    /api/v1/versions/:otherVersionId/bands                       401       200    200      200      200     404       200
GET    /api/v1/versions/:versionId/dossier.pdf                      401       200    200      200      200     200       200
GET    /api/v1/versions/:otherVersionId/dossier.pdf                 401       200    200      200      200     404       200
POST   /api/v1/spectra                                              401       400    403      403      403     403       400

// The signed-in workspace (the _app layout)
GET    /                                                            login     200    200      200      200     200       200
GET    /materials                                                   login     200    200      200      200     403       200
GET    /materials/new                                               login     200    403      403      403     403       200
POST   /materials/new                                               login     400    403      403      403     403       400
GET    /materials/:materialId                                       login     200    200      200      200     403       200
GET    /materials/:unknownId                                        login     404    404      404      404     403       404
POST   /materials/:materialId                                       login     400    403      403      403     403       400
GET    /spectra                                                     login     200    200      200      200     403       200
GET    /spectra/upload                                              login     200    403      403      403     403       200
POST   /spectra/upload                                              login     400    403      403      403     403       400
POST   /spectra/upload-file                                         login     400    403      403      403     403       400
GET    /spectra/:spectrumId                                         login     200    200      200      200     403       200
GET    /spectra/:spectrumId/data                                    login     200    200      200      200     403       200
GET    /spectra/:spectrumId/original                                login     200    200      200      200     403       200
GET    /specifications                                              login     200    200      200      200     403       200
GET    /specifications/new                                          login     200    403      403      403     403       403
POST   /specifications/new                                          login     400    403      403      403     403       403
GET    /specifications/:specId                                      login     302    302      302      302     403       302
GET    /specifications/:specId/changes                              login     200    200      200      200     403       200
GET    /specifications/:specId/versions/:versionId                  login     200    200      200      200     403       200
GET    /specifications/:specId/versions/:draftVersionId             login     200    200      200      200     403       200
POST   /specifications/:specId/versions/:versionId                  login     400    403      403      403     403       403
POST   /specifications/:specId/versions/:versionId#submit           login     409    403      403      403     403       403
POST   /specifications/:specId/versions/:versionId#sign-reviewed    login     403    409      409      403     403       403
POST   /specifications/:specId/versions/:versionId#redline-add      login     403    409      409      403     403       403
POST   /specifications/:specId/versions/:versionId#redline-empty    login     403    400      400      403     403       403
POST   /specifications/:specId/versions/:versionId#redline-reply    login     404    404      404      404     403       404
GET    /specifications/:specId/versions/:versionId/band-suggestions login     200    403      403      403     403       403
GET    /specifications/:specId/versions/:versionId/dossier/pdf      login     200    200      200      200     403       200
// Instruments: lab staff read them; analysts and administrators register them; only analysts record checks.
GET    /instruments                                                 login     200    200      200      200     403       200
GET    /instruments/new                                             login     403    403      403      200     403       200
POST   /instruments/new                                             login     403    403      403      400     403       400
GET    /instruments/:instrumentId                                   login     200    200      200      200     403       200
GET    /instruments/:unknownId                                      login     404    404      404      404     403       404
POST   /instruments/:instrumentId                                   login     403    403      403      400     403       403
// Lots and identity runs: lab staff read them; only analysts record runs and retests. On the verified, flagged run
// each signature is refused by role first, then by the state (409); an approver concludes its investigation.
GET    /lots                                                        login     200    200      200      200     403       200
GET    /lots/new                                                    login     403    403      403      200     403       403
POST   /lots/new                                                    login     403    403      403      400     403       403
GET    /lots/:lotId                                                 login     200    200      200      200     403       200
GET    /lots/:unknownId                                             login     404    404      404      404     403       404
GET    /runs/:runId                                                 login     200    200      200      200     403       200
GET    /runs/:unknownId                                             login     404    404      404      404     403       404
POST   /runs/:runId                                                 login     400    400      400      400     403       400
POST   /runs/:runId#sign-performed                                  login     403    403      403      409     403       403
POST   /runs/:runId#verify                                          login     403    409      409      409     403       403
POST   /runs/:runId#verify-no-password                              login     403    400      400      400     403       403
POST   /runs/:runId#close-investigation                             login     403    403      302      403     403       403
GET    /runs/:runId/retest                                          login     403    403      403      200     403       403
POST   /runs/:runId/retest                                          login     403    403      403      400     403       403
GET    /runs/:runId/containers/2                                    login     200    200      200      200     403       200
GET    /runs/:runId/containers/9                                    login     404    404      404      404     403       404
GET    /runs/:runId/record.pdf                                      login     200    200      200      200     403       200
GET    /trends                                                      login     200    200      200      200     403       200
GET    /queue                                                       login     200    200      200      403     403       403
GET    /queue/count                                                 login     200    200      200      403     403       403
GET    /verify                                                      login     200    200      200      200     200       200
// Checking a copy only reads, so the read-only inspector may post it (ROUTE_POLICIES in app/.server/context.ts).
POST   /verify                                                      login     400    400      400      400     400       400
GET    /api-docs                                                    login     200    200      200      200     200       200
// Everyone signed in keeps personal API keys: the inspector may post here too, for read-only keys (ROUTE_POLICIES).
GET    /settings/api-keys                                           login     200    200      200      200     200       200
POST   /settings/api-keys                                           login     400    400      400      400     400       400
GET    /inspection                                                  login     403    403      403      403     200       403
GET    /inspection/:versionId                                       login     403    403      403      403     200       403
GET    /inspection/:draftVersionId                                  login     403    403      403      403     403       403
GET    /inspection/:otherVersionId                                  login     403    403      403      403     403       403
GET    /inspection/:versionId/dossier/pdf                           login     403    403      403      403     200       403
GET    /inspection/:otherVersionId/dossier/pdf                      login     403    403      403      403     403       403
GET    /audit                                                       login     403    403      200      403     403       200
GET    /audit/export.csv                                            login     403    403      200      403     403       200
GET    /admin/users                                                 login     403    403      403      403     403       200
GET    /admin/users/new                                             login     403    403      403      403     403       200
POST   /admin/users/new                                             login     403    403      403      403     403       400
GET    /admin/users/:userId                                         login     403    403      403      403     403       200
POST   /admin/users/:userId                                         login     403    403      403      403     403       400
GET    /admin/grants                                                login     403    403      403      403     403       200
POST   /admin/grants                                                login     403    403      403      403     403       400
GET    /admin/mailbox                                               login     403    403      403      403     403       200
`

/** A request body other than the empty form: `:name` in a string value is filled like the URL. */
export type RequestSpec =
	| { form: Record<string, string> }
	| { json: Record<string, unknown> }
	| { multipart: Record<string, string> }
	/** Signed in afresh for this one request, because the request ends its session. */
	| { freshSession: true }

export const REQUESTS: Record<string, RequestSpec> = {
	'POST /sign-out': { freshSession: true },
	'POST /api/auth/sign-in/email': { json: {} },
	'POST /api/v1/specifications/:specId/compare': { json: { sampleSpectrumId: ':spectrumId' } },
	'POST /api/v1/specifications/:specId/compare#empty-body': { json: {} },
	'POST /api/v1/spectra': { multipart: { purpose: 'sample' } },
	// Workflow steps and redlines on the effective version: each is refused by role first, then by the state.
	'POST /specifications/:specId/versions/:versionId#submit': { form: { intent: 'workflow', step: 'submit' } },
	'POST /specifications/:specId/versions/:versionId#sign-reviewed': {
		form: { intent: 'workflow', step: 'sign-reviewed', password: ':password' },
	},
	'POST /specifications/:specId/versions/:versionId#redline-add': {
		form: { intent: 'redline-add', anchor: 'scope', body: 'Name the suppliers covered.' },
	},
	// An empty comment: refused by role first (403), and only then as an invalid form (400).
	'POST /specifications/:specId/versions/:versionId#redline-empty': {
		form: { intent: 'redline-add', anchor: 'scope', body: '' },
	},
	'POST /specifications/:specId/versions/:versionId#redline-reply': {
		form: { intent: 'redline-reply', redlineId: ':unknownId', body: 'Agreed.' },
	},
	// Signatures and the investigation of the verified, flagged run, each with the signer's password.
	'POST /runs/:runId#sign-performed': { form: { intent: 'sign-performed', password: ':password' } },
	'POST /runs/:runId#verify': { form: { intent: 'verify', password: ':password' } },
	// Refused by role before the missing password is noticed.
	'POST /runs/:runId#verify-no-password': { form: { intent: 'verify' } },
	'POST /runs/:runId#close-investigation': {
		form: {
			intent: 'close-investigation',
			conclusion: 'invalidated',
			summary: 'Container 2 was sampled from a drum of another material; the booth log shows the mix-up.',
			password: ':password',
		},
	},
}
