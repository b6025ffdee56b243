/**
 * What a signature on a specification version covers, and how it is hashed: the version's canonical document,
 * serialised with the JSON Canonicalization Scheme (RFC 8785) and hashed with SHA-256. A signature stores that hash,
 * so a signature copied to another version, or a version changed after signing, no longer verifies
 * (21 CFR 11.70 and 11.10(a), FACTS.md §3.1).
 *
 * Pure: Web Crypto (`globalThis.crypto.subtle`) only, available in Node ≥ 20 and browsers.
 */
import canonicalize from 'canonicalize'
import { type SpecVersionContent } from '#shared/specs/version-content.ts'

/**
 * Names the layout of the canonical document. It is part of the hashed document, so a later layout (a new field,
 * say) gets a new name and versions signed under this one keep verifying with this one's builder.
 */
export const CANONICAL_FORMAT = 'bandproof.spec-version/1'

export type JsonValue = null | boolean | number | string | Array<JsonValue> | { [key: string]: JsonValue }

export type ReferenceSpectrumRef = {
	/** SHA-256 of the uploaded original file's bytes, 64 hex digits. */
	sha256: string
	fileName: string
}

export type CanonicalVersionInput = {
	documentNumber: string
	title: string
	materialCode: string
	versionNumber: number
	content: SpecVersionContent
	/** The spectrum `content.referenceSpectrumId` points at; null exactly when that id is null. */
	referenceSpectrum: ReferenceSpectrumRef | null
	changeReason: string | null
}

type CanonicalRegion = { from: number; to: number; label: string | null }

type CanonicalBand = {
	id: string
	position: number
	tolerance: number | null
	assignment: string
	intensityClass: string
	shape: string
	required: boolean
}

export type CanonicalVersionDocument = {
	format: typeof CANONICAL_FORMAT
	documentNumber: string
	title: string
	materialCode: string
	versionNumber: number
	changeReason: string | null
	referenceSpectrum: ReferenceSpectrumRef | null
	content: {
		scope: string
		method: {
			technique: string
			rangeFrom: number
			rangeTo: number
			resolution: number
			scans: number
			samplePreparation: string
		}
		criteria: {
			minCorrelation: number
			minDerivativeCorrelation: number | null
			defaultBandTolerance: number | null
			exclusionRegions: Array<CanonicalRegion>
			thresholdJustification: string
		}
		bands: Array<CanonicalBand>
		notes: string
	}
}

const SHA256_HEX = /^[0-9a-f]{64}$/i

/**
 * The JSON object that signatures on a version cover. Every field is picked explicitly, so stray keys in stored
 * content can never slip into (or out of) what was signed.
 *
 * Included: the document's identity (number, title, material code), the version number, its change reason, every
 * content field, and the referenced spectrum's SHA-256 and file name, so that a swapped spectrum breaks the signature.
 * Excluded, as volatile or not part of what a signer reads: database ids (`referenceSpectrumId` included: the
 * spectrum is identified by its bytes' hash), state, timestamps, effective date, signatures and redlines.
 *
 * Array order is kept (band-table rows and exclusion regions print in that order, so reordering is a change).
 * A blank change reason and a missing region label become null, and hex digests lower case. Throws on inconsistent input (a bug).
 */
export function canonicalVersionDocument(input: CanonicalVersionInput): CanonicalVersionDocument {
	const { content, referenceSpectrum } = input
	if ((content.referenceSpectrumId === null) !== (referenceSpectrum === null)) {
		throw new Error('The reference spectrum must be given exactly when the content links one')
	}
	if (referenceSpectrum && !SHA256_HEX.test(referenceSpectrum.sha256)) {
		throw new Error('The reference spectrum hash must be 64 hexadecimal digits (SHA-256)')
	}
	const changeReason = input.changeReason === null || input.changeReason.trim() === '' ? null : input.changeReason
	return {
		format: CANONICAL_FORMAT,
		documentNumber: input.documentNumber,
		title: input.title,
		materialCode: input.materialCode,
		versionNumber: input.versionNumber,
		changeReason,
		referenceSpectrum: referenceSpectrum
			? { sha256: referenceSpectrum.sha256.toLowerCase(), fileName: referenceSpectrum.fileName }
			: null,
		content: {
			scope: content.scope,
			method: {
				technique: content.method.technique,
				rangeFrom: content.method.rangeFrom,
				rangeTo: content.method.rangeTo,
				resolution: content.method.resolution,
				scans: content.method.scans,
				samplePreparation: content.method.samplePreparation,
			},
			criteria: {
				minCorrelation: content.criteria.minCorrelation,
				minDerivativeCorrelation: content.criteria.minDerivativeCorrelation,
				defaultBandTolerance: content.criteria.defaultBandTolerance,
				exclusionRegions: content.criteria.exclusionRegions.map((region) => ({
					from: region.from,
					to: region.to,
					label: region.label ?? null,
				})),
				thresholdJustification: content.criteria.thresholdJustification,
			},
			bands: content.bands.map((band) => ({
				id: band.id,
				position: band.position,
				tolerance: band.tolerance,
				assignment: band.assignment,
				intensityClass: band.intensityClass,
				shape: band.shape,
				required: band.required,
			})),
			notes: content.notes,
		},
	}
}

/**
 * RFC 8785 canonical JSON of a plain JSON value (via the `canonicalize` package). Beyond the package, refuses what
 * RFC 8785 says a compliant implementation must refuse or what would serialise ambiguously: lone surrogates
 * (§3.2.2.2), NaN and ±Infinity (§3.2.2.3), and anything that is not plain JSON data (Dates, class instances,
 * undefined, functions, bigint; Appendix E: carry such values as strings). Throws on those (a bug). Pure.
 */
export function canonicalJson(value: JsonValue): string {
	assertPlainJson(value, '$')
	const text = canonicalize(value)
	if (text === undefined) throw new Error('Nothing to canonicalise')
	return text
}

const LONE_SURROGATE = /\p{Cs}/u

function assertPlainJson(value: unknown, path: string): void {
	if (value === null || typeof value === 'boolean') return
	if (typeof value === 'number') {
		if (!Number.isFinite(value)) throw new Error(`${path}: NaN and Infinity are not JSON (RFC 8785 §3.2.2.3)`)
		return
	}
	if (typeof value === 'string') {
		if (LONE_SURROGATE.test(value)) throw new Error(`${path}: lone surrogate in string (RFC 8785 §3.2.2.2)`)
		return
	}
	if (Array.isArray(value)) {
		value.forEach((item, index) => assertPlainJson(item, `${path}[${index}]`))
		return
	}
	if (typeof value === 'object') {
		const prototype: unknown = Object.getPrototypeOf(value)
		if (prototype !== Object.prototype && prototype !== null) throw new Error(`${path}: not a plain JSON object`)
		for (const [key, item] of Object.entries(value)) {
			if (LONE_SURROGATE.test(key)) throw new Error(`${path}: lone surrogate in a property name (RFC 8785 §3.2.2.2)`)
			assertPlainJson(item, `${path}.${key}`)
		}
		return
	}
	throw new Error(`${path}: ${typeof value} is not JSON`)
}

/** Lower-case hex SHA-256 of the text's UTF-8 bytes (RFC 8785 §3.2.4) or of the given bytes. Pure (Web Crypto). */
export async function sha256Hex(input: string | ArrayBuffer | ArrayBufferView): Promise<string> {
	const bytes = toBytes(input)
	const digest = await globalThis.crypto.subtle.digest('SHA-256', bytes)
	return Array.from(new Uint8Array(digest), (byte) => byte.toString(16).padStart(2, '0')).join('')
}

function toBytes(input: string | ArrayBuffer | ArrayBufferView): Uint8Array<ArrayBuffer> {
	if (typeof input === 'string') return new TextEncoder().encode(input)
	// NOTE: copied so that views over shared or pooled buffers (Node's Buffer) hash exactly their own bytes.
	const view =
		input instanceof ArrayBuffer
			? new Uint8Array(input)
			: new Uint8Array(input.buffer, input.byteOffset, input.byteLength)
	const copy = new Uint8Array(view.byteLength)
	copy.set(view)
	return copy
}

/** SHA-256 (lower-case hex) of the canonical JSON of a version document: the value a signature stores. */
export async function contentHash(document: CanonicalVersionDocument): Promise<string> {
	return sha256Hex(canonicalJson(document))
}
