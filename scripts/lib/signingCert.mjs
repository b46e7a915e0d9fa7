// The development signing certificate for minutes: a small certificate authority of our own and a
// signer it issued, made once with the openssl command and reused afterwards. Plain Node: it runs
// from scripts/start.mjs and scripts/test.mjs before dependencies exist.
import { execFileSync } from 'node:child_process'
import { randomBytes, X509Certificate } from 'node:crypto'
import { chmodSync, existsSync, mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'
import process from 'node:process'

export const SIGNER_COMMON_NAME = 'Counterpoise development signer'
export const CA_COMMON_NAME = 'Counterpoise development CA'
const ORGANISATION = 'Counterpoise (development)'
/** The authority outlives many signers, so minutes signed earlier stay trusted after a renewal. */
const CA_DAYS = 3650
const SIGNER_DAYS = 730
/** A certificate that ends within this many days is renewed now rather than in the middle of a meeting. */
const RENEW_WITHIN_DAYS = 30

const FILES = {
  caKey: 'ca.key',
  caCert: 'ca.crt',
  signerCert: 'signer.crt',
  p12: 'signer.p12',
  passphrase: 'passphrase',
}

function openssl(args, cwd) {
  try {
    return execFileSync('openssl', args, { cwd, stdio: ['ignore', 'pipe', 'pipe'] })
  }
  catch (error) {
    if (error.code === 'ENOENT') throw new Error('the openssl command is missing: install it with `apt-get install -y openssl`', { cause: error })
    throw new Error(`openssl ${args[0]} failed: ${String(error.stderr || error.message).trim()}`, { cause: error })
  }
}

/** A certificate file that can be read and stays valid for RENEW_WITHIN_DAYS more days. */
function usable(certPath) {
  if (!existsSync(certPath)) return false
  try {
    const cert = new X509Certificate(readFileSync(certPath))
    return new Date(cert.validTo).getTime() - Date.now() > RENEW_WITHIN_DAYS * 86_400_000
  }
  catch {
    return false
  }
}

const sleep = ms => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms)

/** A lock directory, so `npm start` and `npm test` started together make one certificate, not two. */
function withLock(dir, work) {
  const lock = join(dir, '.lock')
  const deadline = Date.now() + 60_000
  for (;;) {
    try {
      mkdirSync(lock)
      break
    }
    catch (error) {
      if (error.code !== 'EEXIST') throw error
      // A lock left by a process that died during generation (which takes seconds) is taken over.
      const age = Date.now() - statSync(lock, { throwIfNoEntry: false })?.mtimeMs
      if (age > 60_000) rmSync(lock, { recursive: true, force: true })
      else if (Date.now() > deadline) throw new Error(`another process holds ${lock}; remove it if no set-up is running`, { cause: error })
      else sleep(200)
    }
  }
  try {
    return work()
  }
  finally {
    rmSync(lock, { recursive: true, force: true })
  }
}

/** Write a file only its owner may read, atomically (a reader never sees half of it). */
function writePrivate(path, content) {
  writeFileSync(`${path}.tmp`, content, { mode: 0o600 })
  chmodSync(`${path}.tmp`, 0o600)
  renameSync(`${path}.tmp`, path)
}

function makeAuthority(dir) {
  openssl(['req', '-x509', '-newkey', 'rsa:3072', '-nodes', '-sha256',
    '-keyout', `${FILES.caKey}.tmp`, '-out', `${FILES.caCert}.tmp`, '-days', String(CA_DAYS),
    '-subj', `/O=${ORGANISATION}/CN=${CA_COMMON_NAME}`,
    '-addext', 'basicConstraints=critical,CA:TRUE,pathlen:0',
    '-addext', 'keyUsage=critical,keyCertSign,cRLSign',
    '-addext', 'subjectKeyIdentifier=hash'], dir)
  chmodSync(join(dir, `${FILES.caKey}.tmp`), 0o600)
  renameSync(join(dir, `${FILES.caKey}.tmp`), join(dir, FILES.caKey))
  renameSync(join(dir, `${FILES.caCert}.tmp`), join(dir, FILES.caCert))
}

function makeSigner(dir) {
  const work = join(dir, 'work')
  rmSync(work, { recursive: true, force: true })
  mkdirSync(work, { mode: 0o700 })
  try {
    writeFileSync(join(work, 'extensions.cnf'), [
      'basicConstraints = critical, CA:FALSE',
      'keyUsage = critical, digitalSignature, nonRepudiation',
      'subjectKeyIdentifier = hash',
      'authorityKeyIdentifier = keyid, issuer',
      '',
    ].join('\n'))
    openssl(['req', '-new', '-newkey', 'rsa:3072', '-nodes', '-sha256', '-keyout', 'signer.key', '-out', 'signer.csr',
      '-subj', `/O=${ORGANISATION}/CN=${SIGNER_COMMON_NAME}`], work)
    chmodSync(join(work, 'signer.key'), 0o600)
    // A random positive 64-bit serial: certificates from different machines never share one.
    const serial = `0x${(randomBytes(8)[0] & 0x7F).toString(16).padStart(2, '0')}${randomBytes(7).toString('hex')}`
    openssl(['x509', '-req', '-in', 'signer.csr', '-CA', join(dir, FILES.caCert), '-CAkey', join(dir, FILES.caKey),
      '-set_serial', serial, '-days', String(SIGNER_DAYS), '-sha256', '-extfile', 'extensions.cnf', '-out', 'signer.crt'], work)
    const passphrase = randomBytes(24).toString('base64url')
    writePrivate(join(work, 'passphrase'), `${passphrase}\n`)
    // The key with its chain (signer, then the authority) so a signature carries both certificates.
    // AES-256 and a SHA-256 MAC: OpenSSL 3's defaults, and what node-forge (used by the signer) reads.
    openssl(['pkcs12', '-export', '-inkey', 'signer.key', '-in', 'signer.crt', '-certfile', join(dir, FILES.caCert),
      '-name', SIGNER_COMMON_NAME, '-keypbe', 'AES-256-CBC', '-certpbe', 'AES-256-CBC', '-macalg', 'sha256',
      '-passout', 'file:passphrase', '-out', 'signer.p12'], work)
    chmodSync(join(work, 'signer.p12'), 0o600)
    // The passphrase and the bundle change together: the bundle is renamed last and is what is checked.
    renameSync(join(work, 'signer.crt'), join(dir, FILES.signerCert))
    renameSync(join(work, 'passphrase'), join(dir, FILES.passphrase))
    renameSync(join(work, 'signer.p12'), join(dir, FILES.p12))
  }
  finally {
    rmSync(work, { recursive: true, force: true })
  }
}

/**
 * The signing key for minutes. With COUNTERPOISE_SIGNING_P12 set in `env`, that configuration is
 * returned as it is (nothing is generated). Otherwise a development authority and a signer
 * certificate for "Counterpoise development signer" (digitalSignature, nonRepudiation; two years,
 * the authority ten) are made in `dir` the first time, and reused while they stay valid for 30 more
 * days; a signer about to expire is renewed by the same authority. The key and chain are a PKCS#12
 * bundle whose random passphrase is stored beside it; keys, bundle and passphrase are 0600.
 * Returns absolute paths and the passphrase. Throws with an install hint when openssl is missing.
 */
export function ensureDevSigningCert({ dir = '.data/signing', env = process.env } = {}) {
  if (env.COUNTERPOISE_SIGNING_P12) {
    return {
      p12Path: resolve(env.COUNTERPOISE_SIGNING_P12),
      passphrase: env.COUNTERPOISE_SIGNING_PASSPHRASE ?? '',
      caCertPath: env.COUNTERPOISE_SIGNING_CA ? resolve(env.COUNTERPOISE_SIGNING_CA) : '',
    }
  }
  const home = resolve(dir)
  mkdirSync(home, { recursive: true, mode: 0o700 })
  chmodSync(home, 0o700)
  return withLock(home, () => {
    const path = name => join(home, FILES[name])
    if (!usable(path('caCert')) || !existsSync(path('caKey'))) {
      makeAuthority(home)
      rmSync(path('p12'), { force: true })
    }
    if (!usable(path('signerCert')) || !existsSync(path('p12')) || !existsSync(path('passphrase'))) makeSigner(home)
    return {
      p12Path: path('p12'),
      passphrase: readFileSync(path('passphrase'), 'utf8').trim(),
      caCertPath: path('caCert'),
    }
  })
}
