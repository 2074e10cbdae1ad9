import { describe, expect, it } from 'vitest';
import { runCommandLine } from '../cli/cli-harness.js';
import { buildConfigReference } from '../../src/config/config-reference.js';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { at, dockerStages, envPairs, only, parseYaml, readDockerFile, servedPaths, yamlFiles, type Json } from './deploy-files.js';

/**
 * docker/ cannot be built or run here (no container engine), so these tests check what can be checked
 * without one: every file parses, the probes name paths the app serves, the ports agree with each other
 * and with the configuration default, the image and pods run as non-root, and every variable the
 * deployment sets is one the service reads (secrets as files).
 */

const DOCKERFILE = dockerStages(readDockerFile('Dockerfile'));
const RUNTIME = DOCKERFILE.at(-1);
const COMPOSE = only('compose.yaml');
const DEPLOYMENT = only('k8s/deployment.yaml');
const MIGRATION = only('k8s/migration-job.yaml');
const POD = at(DEPLOYMENT, 'spec', 'template', 'spec') as Json;
const CONTAINER = at(POD, 'containers', 0) as Json;
const PORT = ENV_DEFAULTS.PORT;

/** The compose services run from this repository's image (the others are PostgreSQL and nginx). */
function checkerServices(): [string, Json][] {
  const services = at(COMPOSE, 'services') as Record<string, Json>;
  return Object.entries(services).filter(([, service]) => at(service, 'build', 'dockerfile') === 'docker/Dockerfile');
}

function k8sEnv(container: unknown): { name: string; value?: string; valueFrom?: unknown }[] {
  return (at(container, 'env') ?? []) as { name: string; value?: string; valueFrom?: unknown }[];
}

describe('docker/ files', () => {
  it('every YAML file parses without errors or warnings', () => {
    const files = yamlFiles();
    expect(files).toEqual(expect.arrayContaining(['compose.yaml', 'k8s/deployment.yaml', 'k8s/service.yaml', 'k8s/hpa.yaml', 'k8s/pdb.yaml', 'k8s/policy-configmap.yaml', 'k8s/secret.yaml', 'k8s/migration-job.yaml']));
    for (const file of files) {
      const { docs, errors } = parseYaml(file);
      expect(errors, file).toStrictEqual([]);
      expect(docs.length, file).toBeGreaterThan(0);
    }
  });

  it('kustomization.yaml lists every manifest in docker/k8s', () => {
    const listed = (at(only('k8s/kustomization.yaml'), 'resources') as string[]).map((r) => `k8s/${r}`).sort();
    expect(listed).toStrictEqual(yamlFiles().filter((f) => f.startsWith('k8s/') && f !== 'k8s/kustomization.yaml'));
  });

  it('each manifest is the kind of object its file is named for', () => {
    const kinds = Object.fromEntries(
      yamlFiles()
        .filter((f) => f.startsWith('k8s/'))
        .map((f) => [f, at(only(f), 'kind')]),
    );
    expect(kinds).toStrictEqual({
      'k8s/deployment.yaml': 'Deployment',
      'k8s/hpa.yaml': 'HorizontalPodAutoscaler',
      'k8s/kustomization.yaml': 'Kustomization',
      'k8s/migration-job.yaml': 'Job',
      'k8s/pdb.yaml': 'PodDisruptionBudget',
      'k8s/policy-configmap.yaml': 'ConfigMap',
      'k8s/secret.yaml': 'Secret',
      'k8s/service.yaml': 'Service',
    });
  });
});

describe('the image', () => {
  it('builds in stages and runs on a slim base without the build stage or dev dependencies', () => {
    expect(DOCKERFILE.length).toBeGreaterThanOrEqual(2);
    expect(RUNTIME?.base).toMatch(/^node:20[\w.-]*-slim$/);
    const runtimeCopies = RUNTIME?.instructions.filter((i) => i.keyword === 'COPY').map((i) => i.args) ?? [];
    // Production modules come from the stage that installed them with --omit=dev.
    const modulesFrom = /--from=(\S+)\s+\S*node_modules/.exec(runtimeCopies.join('\n'))?.[1];
    const modulesStage = DOCKERFILE.find((s) => s.name === modulesFrom);
    expect(modulesStage?.instructions.some((i) => i.keyword === 'RUN' && /npm ci\b.*--omit=dev/.test(i.args))).toBe(true);
    expect(RUNTIME?.instructions.some((i) => i.keyword === 'RUN' && /\bnpm (ci|install)\b|\btsc\b/.test(i.args))).toBe(false);
  });

  it('bundles the policies, the card wording and the examples', () => {
    const copied = RUNTIME?.instructions.filter((i) => i.keyword === 'COPY').map((i) => i.args.split(/\s+/)[0]) ?? [];
    expect(copied).toEqual(expect.arrayContaining(['policies/', 'cards/', 'examples/']));
  });

  it('runs as a user other than root, and starts node directly (no npm, no compiler)', () => {
    const users = RUNTIME?.instructions.filter((i) => i.keyword === 'USER').map((i) => i.args) ?? [];
    expect(users.length).toBeGreaterThan(0);
    expect(users.at(-1)).not.toMatch(/^(root|0)(:|$)/);
    expect(RUNTIME?.instructions.find((i) => i.keyword === 'CMD')?.args).toBe('["node", "dist/server.js"]');
  });

  it('exposes and listens on the configured default port, on all interfaces, in production mode', () => {
    const env = Object.fromEntries(RUNTIME?.instructions.filter((i) => i.keyword === 'ENV').flatMap((i) => envPairs(i.args)) ?? []);
    expect(RUNTIME?.instructions.find((i) => i.keyword === 'EXPOSE')?.args).toBe(String(PORT));
    // Demo mode refuses a non-loopback HOST, so an image listening on 0.0.0.0 must be in production mode.
    expect(env).toMatchObject({ PORT: String(PORT), HOST: '0.0.0.0', OXYGEN_CHECKER_MODE: 'production' });
  });

  it('checks its health on /healthz, a path the app serves', () => {
    const healthcheck = RUNTIME?.instructions.find((i) => i.keyword === 'HEALTHCHECK')?.args ?? '';
    const path = /127\.0\.0\.1:'\+\(process\.env\.PORT\|\|(\d+)\)\+'(\/[a-z]+)/.exec(healthcheck);
    expect(path?.[2]).toBe('/healthz');
    expect(Number(path?.[1])).toBe(PORT);
    expect(servedPaths()).toContain('/healthz');
  });
});

describe('probes', () => {
  it('liveness asks /healthz, which the app serves', () => {
    expect(at(CONTAINER, 'livenessProbe', 'httpGet', 'path')).toBe('/healthz');
    expect(at(CONTAINER, 'startupProbe', 'httpGet', 'path')).toBe('/healthz');
    expect(servedPaths()).toContain('/healthz');
  });

  it('readiness asks /readyz', () => {
    expect(at(CONTAINER, 'readinessProbe', 'httpGet', 'path')).toBe('/readyz');
  });

  it('the app serves /readyz, which the readiness probe asks', () => {
    expect(servedPaths()).toContain('/readyz');
  });

  it('name the container port that the service listens on', () => {
    const ports = at(CONTAINER, 'ports') as { name: string; containerPort: number }[];
    for (const probe of ['livenessProbe', 'readinessProbe', 'startupProbe']) {
      const port = at(CONTAINER, probe, 'httpGet', 'port');
      expect(ports.find((p) => p.name === port)?.containerPort, probe).toBe(PORT);
    }
  });
});

describe('ports', () => {
  it('agree between the configuration default, compose, nginx and Kubernetes', () => {
    const nginx = readDockerFile('nginx.conf');
    const upstreams = [...nginx.matchAll(/^\s*server\s+([\w-]+):(\d+)/gm)].map((m) => [m[1], Number(m[2])]);
    const checkers = checkerServices().map(([name]) => name);
    expect(checkers.length).toBe(2);
    expect(upstreams).toStrictEqual(checkers.map((name) => [name, PORT]));
    for (const [name, service] of checkerServices()) {
      expect(at(service, 'environment', 'PORT'), name).toBe(String(PORT));
      expect(at(service, 'expose'), name).toStrictEqual([String(PORT)]);
    }
    expect(k8sEnv(CONTAINER).find((e) => e.name === 'PORT')?.value).toBe(String(PORT));
    const service = only('k8s/service.yaml');
    const targetPort = at(service, 'spec', 'ports', 0, 'targetPort');
    const containerPorts = at(CONTAINER, 'ports') as { name: string; containerPort: number }[];
    expect(containerPorts.find((p) => p.name === targetPort)?.containerPort).toBe(PORT);
  });
});

describe('metrics', () => {
  // /metrics has no authentication (docs/security.md): where the deployment turns it on, the public
  // side must not reach it.
  it('are on in compose and Kubernetes, and the load balancer in front never forwards /metrics', () => {
    for (const [name, service] of checkerServices()) {
      expect(at(service, 'environment', 'OXYGEN_CHECKER_METRICS'), name).toBe('on');
    }
    expect(k8sEnv(CONTAINER).find((e) => e.name === 'OXYGEN_CHECKER_METRICS')?.value).toBe('on');
    const blocked = /location\s*=\s*\/metrics\s*\{\s*(return\s+404|deny\s+all)\s*;\s*\}/.exec(readDockerFile('nginx.conf'));
    expect(blocked, 'nginx.conf: location = /metrics { return 404; }').not.toBeNull();
  });
});

describe('pods', () => {
  it('run as a user other than root, without privilege escalation', () => {
    for (const [file, pod] of [['deployment', POD], ['migration job', at(MIGRATION, 'spec', 'template', 'spec')]] as const) {
      expect(at(pod, 'securityContext', 'runAsNonRoot'), file).toBe(true);
      expect(at(pod, 'securityContext', 'runAsUser'), file).not.toBe(0);
      for (const container of [...((at(pod, 'initContainers') ?? []) as Json[]), ...(at(pod, 'containers') as Json[])]) {
        expect(at(container, 'securityContext', 'allowPrivilegeEscalation'), `${file} ${String(container['name'])}`).toBe(false);
      }
    }
  });

  it('the service, PDB and HPA select or target the Deployment', () => {
    const labels = at(DEPLOYMENT, 'spec', 'template', 'metadata', 'labels');
    expect(at(DEPLOYMENT, 'spec', 'selector', 'matchLabels')).toStrictEqual(labels);
    expect(at(only('k8s/service.yaml'), 'spec', 'selector')).toStrictEqual(labels);
    expect(at(only('k8s/pdb.yaml'), 'spec', 'selector', 'matchLabels')).toStrictEqual(labels);
    expect(at(only('k8s/hpa.yaml'), 'spec', 'scaleTargetRef', 'name')).toBe(at(DEPLOYMENT, 'metadata', 'name'));
    expect(at(only('k8s/hpa.yaml'), 'spec', 'minReplicas')).toBeGreaterThanOrEqual(2);
  });

  it('give calls in flight their shutdown grace before they are killed', () => {
    const graceS = Number(at(POD, 'terminationGracePeriodSeconds'));
    expect(graceS * 1000).toBeGreaterThan(ENV_DEFAULTS.OXYGEN_CHECKER_SHUTDOWN_GRACE_MS);
  });
});

describe('the migration Job', () => {
  const command = at(MIGRATION, 'spec', 'template', 'spec', 'containers', 0, 'command') as string[];

  it('runs the image\'s command line with the image\'s node', () => {
    expect(command.slice(0, 2)).toStrictEqual(['node', 'dist/cli/main.js']);
    expect(at(MIGRATION, 'spec', 'template', 'spec', 'containers', 0, 'image')).toBe(at(CONTAINER, 'image'));
  });

  it('runs a command the command line has', async () => {
    const run = await runCommandLine([...command.slice(2), '--help']);
    expect(run.code).toBe(0);
  });
});

describe('configuration in compose and Kubernetes', () => {
  const reference = buildConfigReference();
  const variables = reference.kind === 'ok' ? reference.variables : [];
  const byName = new Map(variables.map((v) => [v.name, v]));
  /** Variables the deployment sets that arrive with work merged beside this one. */
  const PENDING = new Set<string>();

  /** Every variable set for the service: compose's checker services, the Deployment and the Job. */
  function setVariables(): [string, string, string][] {
    const fromCompose = checkerServices().flatMap(([service, body]) =>
      Object.entries((at(body, 'environment') ?? {}) as Record<string, string>).map(([name, value]): [string, string, string] => [`compose ${service}`, name, String(value)]),
    );
    const fromK8s = [
      ...k8sEnv(CONTAINER).map((e): [string, string, string] => ['deployment', e.name, e.value ?? '']),
      ...k8sEnv(at(MIGRATION, 'spec', 'template', 'spec', 'containers', 0)).map((e): [string, string, string] => ['migration job', e.name, e.value ?? '']),
    ];
    return [...fromCompose, ...fromK8s];
  }

  it('the reference they are checked against is complete', () => {
    expect(reference.kind).toBe('ok');
  });

  it('names only variables the service reads, or NAME_FILE for a secret value', () => {
    const unknown = setVariables().filter(([, name]) => {
      if (byName.has(name) || PENDING.has(name)) {
        return false;
      }
      const secretOf = name.endsWith('_FILE') ? name.slice(0, -'_FILE'.length) : undefined;
      return secretOf === undefined || !(byName.get(secretOf)?.secret === 'value' || PENDING.has(secretOf));
    });
    expect(unknown).toStrictEqual([]);
  });

  // Secret value: DATABASE_URL_FILE is read (src/config/secret-variables.ts).
  it('DATABASE_URL is in the configuration reference as a secret value', () => {
    expect(byName.get('DATABASE_URL')?.secret).toBe('value');
  });

  it('passes every secret as a file mounted under /run/secrets, never as a value', () => {
    const secretPaths = setVariables().filter(([, name]) => byName.get(name)?.secret === 'file' || name.endsWith('_FILE'));
    expect(secretPaths.map(([, name]) => name)).toEqual(expect.arrayContaining(['OXYGEN_CHECKER_PATIENT_KEY_FILE', 'OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE', 'DATABASE_URL_FILE']));
    for (const [where, name, value] of secretPaths) {
      expect(value, `${where} ${name}`).toMatch(/^\/run\/secrets\/[\w.-]+$/);
    }
    // No secret reaches a container's environment from a Secret object.
    for (const e of [...k8sEnv(CONTAINER), ...k8sEnv(at(MIGRATION, 'spec', 'template', 'spec', 'containers', 0))]) {
      expect(at(e, 'valueFrom', 'secretKeyRef'), e.name).toBeUndefined();
    }
    for (const [service, body] of checkerServices()) {
      const mounted = (at(body, 'secrets') as string[]).map((s) => `/run/secrets/${s}`);
      for (const [where, name, value] of secretPaths.filter(([w]) => w === `compose ${service}`)) {
        expect(mounted, `${where} ${name}`).toContain(value);
      }
    }
  });

  it('ships the Secret with placeholders only', () => {
    const data = at(only('k8s/secret.yaml'), 'stringData') as Record<string, string>;
    for (const [key, value] of Object.entries(data)) {
      expect(value, key).toMatch(/REPLACE/);
    }
    expect(Object.keys(data).sort()).toStrictEqual(['database-url', 'patient-key', 'review-link-key', 'trust.yaml']);
  });

  it('mounts the policy from the ConfigMap where OXYGEN_CHECKER_POLICY points', () => {
    const policy = k8sEnv(CONTAINER).find((e) => e.name === 'OXYGEN_CHECKER_POLICY')?.value ?? '';
    const mounts = at(CONTAINER, 'volumeMounts') as { name: string; mountPath: string }[];
    const mount = mounts.find((m) => policy.startsWith(`${m.mountPath}/`));
    const volume = (at(POD, 'volumes') as Json[]).find((v) => v['name'] === mount?.name);
    expect(at(volume, 'configMap', 'name')).toBe(at(only('k8s/policy-configmap.yaml'), 'metadata', 'name'));
    expect(Object.keys(at(only('k8s/policy-configmap.yaml'), 'data') as Json)).toContain(policy.slice((mount?.mountPath.length ?? 0) + 1));
  });
});
