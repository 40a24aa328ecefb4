package deploy

import (
	"fmt"
	"net"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"go.uber.org/zap"
	appsv1 "k8s.io/api/apps/v1"
	autoscalingv2 "k8s.io/api/autoscaling/v2"
	corev1 "k8s.io/api/core/v1"
	networkingv1 "k8s.io/api/networking/v1"
	policyv1 "k8s.io/api/policy/v1"
	metav1 "k8s.io/apimachinery/pkg/apis/meta/v1"
	"k8s.io/apimachinery/pkg/labels"
	"k8s.io/apimachinery/pkg/util/intstr"
	"sigs.k8s.io/kustomize/api/krusty"
	"sigs.k8s.io/kustomize/kyaml/filesys"
	"sigs.k8s.io/yaml"

	"github.com/thermalmovement/service/internal/handlers"
	"github.com/thermalmovement/service/internal/materials"
)

// kustomizations are the directories rendered and checked.
var kustomizations = []string{"deploy/k8s/base", "deploy/k8s/overlays/production"}

// rendered is one kustomization's output, every document decoded into
// its k8s.io/api type.
type rendered struct {
	namespaces  []*corev1.Namespace
	accounts    []*corev1.ServiceAccount
	deployments []*appsv1.Deployment
	services    []*corev1.Service
	hpas        []*autoscalingv2.HorizontalPodAutoscaler
	pdbs        []*policyv1.PodDisruptionBudget
	policies    []*networkingv1.NetworkPolicy
	all         []metav1.Object
}

// render runs Kustomize in-process on dir and decodes every document
// strictly: an unknown or misspelt field, a duplicate key or a kind
// without a type here fails the test.
func render(t *testing.T, dir string) *rendered {
	t.Helper()
	k := krusty.MakeKustomizer(krusty.MakeDefaultOptions())
	m, err := k.Run(filesys.MakeFsOnDisk(), filepath.Join(repoRoot, dir))
	if err != nil {
		t.Fatalf("kustomize build %s: %v", dir, err)
	}
	out := &rendered{}
	for _, res := range m.Resources() {
		doc, err := res.AsYAML()
		if err != nil {
			t.Fatal(err)
		}
		gvk := res.GetGvk()
		var obj metav1.Object
		switch key := gvk.ApiVersion() + "/" + gvk.Kind; key {
		case "v1/Namespace":
			o := &corev1.Namespace{}
			out.namespaces, obj = append(out.namespaces, o), o
		case "v1/ServiceAccount":
			o := &corev1.ServiceAccount{}
			out.accounts, obj = append(out.accounts, o), o
		case "apps/v1/Deployment":
			o := &appsv1.Deployment{}
			out.deployments, obj = append(out.deployments, o), o
		case "v1/Service":
			o := &corev1.Service{}
			out.services, obj = append(out.services, o), o
		case "autoscaling/v2/HorizontalPodAutoscaler":
			o := &autoscalingv2.HorizontalPodAutoscaler{}
			out.hpas, obj = append(out.hpas, o), o
		case "policy/v1/PodDisruptionBudget":
			o := &policyv1.PodDisruptionBudget{}
			out.pdbs, obj = append(out.pdbs, o), o
		case "networking.k8s.io/v1/NetworkPolicy":
			o := &networkingv1.NetworkPolicy{}
			out.policies, obj = append(out.policies, o), o
		default:
			t.Fatalf("%s: %s %s has no type in this test; add one", dir, key, res.GetName())
		}
		if err := yaml.UnmarshalStrict(doc, obj); err != nil {
			t.Fatalf("%s: %s %s does not decode strictly: %v\n%s", dir, gvk.Kind, res.GetName(), err, doc)
		}
		out.all = append(out.all, obj)
	}
	return out
}

func one[T any](t *testing.T, dir, kind string, xs []T) T {
	t.Helper()
	if len(xs) != 1 {
		t.Fatalf("%s: %d %s objects, want 1", dir, len(xs), kind)
	}
	return xs[0]
}

// serviceFlags returns the environment variable of every flag of the
// built binary, from its --help.
func serviceFlags(t *testing.T) map[string]bool {
	t.Helper()
	out, err := exec.Command(binary(t), "--help").CombinedOutput()
	if err != nil {
		t.Fatalf("api --help: %v\n%s", err, out)
	}
	env := map[string]bool{}
	for _, m := range regexp.MustCompile(`\(env ([A-Z0-9_]+)\)`).FindAllStringSubmatch(string(out), -1) {
		env[m[1]] = true
	}
	if len(env) < 5 {
		t.Fatalf("api --help lists %d environment variables:\n%s", len(env), out)
	}
	return env
}

// serverRoutes returns the GET routes of the service.
func serverRoutes(t *testing.T) map[string]bool {
	t.Helper()
	cat, err := materials.Load()
	if err != nil {
		t.Fatal(err)
	}
	h, err := handlers.New(zap.NewNop(), prometheus.NewRegistry(), cat, handlers.Options{})
	if err != nil {
		t.Fatal(err)
	}
	get := map[string]bool{}
	for _, r := range h.Routes() {
		if r[0] == "GET" {
			get[r[1]] = true
		}
	}
	return get
}

func selects(t *testing.T, what string, sel *metav1.LabelSelector, podLabels map[string]string) {
	t.Helper()
	if sel == nil || len(sel.MatchLabels)+len(sel.MatchExpressions) == 0 {
		t.Errorf("%s: empty selector selects everything", what)
		return
	}
	s, err := metav1.LabelSelectorAsSelector(sel)
	if err != nil {
		t.Errorf("%s: %v", what, err)
		return
	}
	if !s.Matches(labels.Set(podLabels)) {
		t.Errorf("%s: selector %s does not match the pod labels %v", what, s, podLabels)
	}
}

func port(t *testing.T, what, addr string) int32 {
	t.Helper()
	_, p, err := net.SplitHostPort(addr)
	if err != nil {
		t.Fatalf("%s %q: %v", what, addr, err)
	}
	n, err := strconv.ParseInt(p, 10, 32)
	if err != nil {
		t.Fatalf("%s %q: %v", what, addr, err)
	}
	return int32(n)
}

// containerPort resolves a named or numbered port of c.
func containerPort(c *corev1.Container, p intstr.IntOrString) (int32, bool) {
	for _, cp := range c.Ports {
		if p.Type == intstr.String && cp.Name == p.StrVal || p.Type == intstr.Int && cp.ContainerPort == p.IntVal {
			return cp.ContainerPort, true
		}
	}
	return 0, false
}

// TestManifests renders every kustomization and checks the policy of
// issue 6: replicas, probes on the server's routes and port, resources,
// GOMEMLIMIT from the limit, the restricted security context, spread,
// grace period above the drain, and that the Service, HPA, PDB and
// NetworkPolicy point at the Deployment and its pods.
func TestManifests(t *testing.T) {
	flags := serviceFlags(t)
	routes := serverRoutes(t)
	uid, gid := readDockerfile(t).imageUID(t)
	for _, dir := range kustomizations {
		t.Run(dir, func(t *testing.T) {
			r := render(t, dir)
			dep := one(t, dir, "Deployment", r.deployments)
			svc := one(t, dir, "Service", r.services)
			hpa := one(t, dir, "HorizontalPodAutoscaler", r.hpas)
			pdb := one(t, dir, "PodDisruptionBudget", r.pdbs)
			np := one(t, dir, "NetworkPolicy", r.policies)
			sa := one(t, dir, "ServiceAccount", r.accounts)
			pod := dep.Spec.Template
			podLabels := pod.Labels

			// Deployment and pod.
			if dep.Spec.Replicas == nil || *dep.Spec.Replicas < 2 {
				t.Errorf("Deployment replicas %v, want 2 or more", dep.Spec.Replicas)
			}
			selects(t, "Deployment", dep.Spec.Selector, podLabels)
			ps := pod.Spec
			if ps.AutomountServiceAccountToken == nil || *ps.AutomountServiceAccountToken {
				t.Error("pod automountServiceAccountToken is not false")
			}
			if ps.ServiceAccountName != sa.Name || sa.AutomountServiceAccountToken == nil || *sa.AutomountServiceAccountToken {
				t.Errorf("pod service account %q, want %q with automountServiceAccountToken false", ps.ServiceAccountName, sa.Name)
			}
			psc := ps.SecurityContext
			if psc == nil || psc.RunAsNonRoot == nil || !*psc.RunAsNonRoot || psc.SeccompProfile == nil || psc.SeccompProfile.Type != corev1.SeccompProfileTypeRuntimeDefault {
				t.Errorf("pod securityContext %+v: want runAsNonRoot and seccomp RuntimeDefault", psc)
			} else if psc.RunAsUser == nil || *psc.RunAsUser != int64(uid) || psc.RunAsGroup == nil || *psc.RunAsGroup != int64(gid) {
				t.Errorf("pod runs as %v:%v, want the image's USER %d:%d", psc.RunAsUser, psc.RunAsGroup, uid, gid)
			}
			zones, hosts := false, false
			for _, c := range ps.TopologySpreadConstraints {
				selects(t, "topology spread "+c.TopologyKey, c.LabelSelector, podLabels)
				zones = zones || c.TopologyKey == "topology.kubernetes.io/zone"
				hosts = hosts || c.TopologyKey == "kubernetes.io/hostname"
			}
			if !zones || !hosts {
				t.Errorf("topology spread over zones %v and nodes %v, want both", zones, hosts)
			}
			if len(ps.Containers) != 1 {
				t.Fatalf("%d containers, want 1", len(ps.Containers))
			}
			c := &ps.Containers[0]
			checkContainer(t, dir, c, flags, routes, dep)

			// Service.
			selects(t, "Service", &metav1.LabelSelector{MatchLabels: svc.Spec.Selector}, podLabels)
			for _, sp := range svc.Spec.Ports {
				if p, ok := containerPort(c, sp.TargetPort); !ok || p != port(t, "ADDR", envValue(c, "ADDR")) {
					t.Errorf("Service port %s targets %s, not the API port", sp.Name, sp.TargetPort.String())
				}
			}

			// HorizontalPodAutoscaler.
			ref := hpa.Spec.ScaleTargetRef
			if ref.APIVersion != "apps/v1" || ref.Kind != "Deployment" || ref.Name != dep.Name {
				t.Errorf("HPA scales %+v, want the Deployment %s", ref, dep.Name)
			}
			if hpa.Spec.MinReplicas == nil || *hpa.Spec.MinReplicas < 2 || hpa.Spec.MaxReplicas < *hpa.Spec.MinReplicas {
				t.Errorf("HPA replicas %v..%d, want min 2 or more and max at least min", hpa.Spec.MinReplicas, hpa.Spec.MaxReplicas)
			} else if dep.Spec.Replicas != nil && *dep.Spec.Replicas < *hpa.Spec.MinReplicas {
				t.Errorf("Deployment replicas %d below the HPA minimum %d", *dep.Spec.Replicas, *hpa.Spec.MinReplicas)
			}
			cpu := false
			for _, m := range hpa.Spec.Metrics {
				cpu = cpu || m.Type == autoscalingv2.ResourceMetricSourceType && m.Resource != nil && m.Resource.Name == corev1.ResourceCPU &&
					m.Resource.Target.Type == autoscalingv2.UtilizationMetricType && m.Resource.Target.AverageUtilization != nil
			}
			if !cpu {
				t.Errorf("HPA metrics %+v: want CPU utilisation", hpa.Spec.Metrics)
			}

			// PodDisruptionBudget.
			selects(t, "PodDisruptionBudget", pdb.Spec.Selector, podLabels)
			if pdb.Spec.Selector != nil && !equalLabels(pdb.Spec.Selector.MatchLabels, dep.Spec.Selector.MatchLabels) {
				t.Errorf("PDB selector %v is not the Deployment's %v", pdb.Spec.Selector.MatchLabels, dep.Spec.Selector.MatchLabels)
			}
			switch {
			case pdb.Spec.MaxUnavailable != nil:
				if pdb.Spec.MaxUnavailable.Type != intstr.Int || pdb.Spec.MaxUnavailable.IntVal < 1 || pdb.Spec.MaxUnavailable.IntVal >= *hpa.Spec.MinReplicas {
					t.Errorf("PDB maxUnavailable %s, want 1 to below the minimum replicas", pdb.Spec.MaxUnavailable.String())
				}
			case pdb.Spec.MinAvailable != nil:
				if pdb.Spec.MinAvailable.Type != intstr.Int || pdb.Spec.MinAvailable.IntVal < 1 || pdb.Spec.MinAvailable.IntVal >= *hpa.Spec.MinReplicas {
					t.Errorf("PDB minAvailable %s, want 1 to below the minimum replicas, so that a node can drain", pdb.Spec.MinAvailable.String())
				}
			default:
				t.Error("PDB sets neither maxUnavailable nor minAvailable")
			}

			checkNetworkPolicy(t, np, c, podLabels)

			// Namespaces.
			for _, o := range r.all {
				if _, isNS := o.(*corev1.Namespace); !isNS && len(r.namespaces) > 0 && o.GetNamespace() != r.namespaces[0].Name {
					t.Errorf("%s is in namespace %q, not the overlay's %q", o.GetName(), o.GetNamespace(), r.namespaces[0].Name)
				}
			}
			for _, ns := range r.namespaces {
				if ns.Labels["pod-security.kubernetes.io/enforce"] != "restricted" {
					t.Errorf("namespace %s does not enforce the restricted pod security standard", ns.Name)
				}
			}
		})
	}
}

func equalLabels(a, b map[string]string) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if b[k] != v {
			return false
		}
	}
	return true
}

func envValue(c *corev1.Container, name string) string {
	for _, e := range c.Env {
		if e.Name == name {
			return e.Value
		}
	}
	return ""
}

func checkContainer(t *testing.T, dir string, c *corev1.Container, flags, routes map[string]bool, dep *appsv1.Deployment) {
	t.Helper()
	// Image: pinned, never latest.
	if tag := imageTag(c.Image); tag == "" || tag == "latest" {
		t.Errorf("image %q: want a pinned tag", c.Image)
	}

	// Security context.
	sc := c.SecurityContext
	switch {
	case sc == nil:
		t.Fatal("container has no securityContext")
	case sc.ReadOnlyRootFilesystem == nil || !*sc.ReadOnlyRootFilesystem:
		t.Error("readOnlyRootFilesystem is not true")
	case sc.AllowPrivilegeEscalation == nil || *sc.AllowPrivilegeEscalation:
		t.Error("allowPrivilegeEscalation is not false")
	case sc.Privileged != nil && *sc.Privileged:
		t.Error("privileged")
	case sc.Capabilities == nil || len(sc.Capabilities.Drop) != 1 || sc.Capabilities.Drop[0] != "ALL" || len(sc.Capabilities.Add) > 0:
		t.Errorf("capabilities %+v, want drop [ALL] and no add", sc.Capabilities)
	case sc.RunAsNonRoot == nil || !*sc.RunAsNonRoot:
		t.Error("container runAsNonRoot is not true")
	case sc.SeccompProfile != nil && sc.SeccompProfile.Type != corev1.SeccompProfileTypeRuntimeDefault:
		t.Errorf("container seccomp %s", sc.SeccompProfile.Type)
	}

	// Resources.
	for _, name := range []corev1.ResourceName{corev1.ResourceCPU, corev1.ResourceMemory} {
		req, rok := c.Resources.Requests[name]
		lim, lok := c.Resources.Limits[name]
		if !rok || !lok {
			t.Errorf("%s: request %v and limit %v, want both", name, rok, lok)
			continue
		}
		if req.Cmp(lim) > 0 {
			t.Errorf("%s request %s above its limit %s", name, req.String(), lim.String())
		}
	}

	// Environment: every variable is a flag of the service, except the
	// Go runtime's GOMEMLIMIT, which comes from the memory limit.
	env := map[string]corev1.EnvVar{}
	for _, e := range c.Env {
		env[e.Name] = e
		if e.Name != "GOMEMLIMIT" && !flags[e.Name] {
			t.Errorf("env %s is not a flag of the service (api --help)", e.Name)
		}
	}
	gm, ok := env["GOMEMLIMIT"]
	if !ok || gm.ValueFrom == nil || gm.ValueFrom.ResourceFieldRef == nil ||
		gm.ValueFrom.ResourceFieldRef.Resource != "limits.memory" || gm.ValueFrom.ResourceFieldRef.ContainerName != c.Name ||
		(!gm.ValueFrom.ResourceFieldRef.Divisor.IsZero() && gm.ValueFrom.ResourceFieldRef.Divisor.Value() != 1) {
		t.Errorf("GOMEMLIMIT %+v: want the downward API resourceFieldRef limits.memory of container %s in bytes", gm, c.Name)
	}
	apiPort := port(t, "ADDR", env["ADDR"].Value)
	metricsPort := port(t, "METRICS_ADDR", env["METRICS_ADDR"].Value)
	named := map[string]int32{}
	for _, p := range c.Ports {
		named[p.Name] = p.ContainerPort
	}
	if named["http"] != apiPort || named["metrics"] != metricsPort {
		t.Errorf("container ports %v, want http %d (ADDR) and metrics %d (METRICS_ADDR)", named, apiPort, metricsPort)
	}
	ann := dep.Spec.Template.Annotations
	if ann["prometheus.io/scrape"] != "true" || ann["prometheus.io/port"] != strconv.Itoa(int(metricsPort)) || ann["prometheus.io/path"] != "/metrics" {
		t.Errorf("scrape annotations %v, want scrape true, port %d, path /metrics", ann, metricsPort)
	}

	// Probes: GET routes of the server, on the port the router listens on.
	for _, pr := range []struct {
		name  string
		probe *corev1.Probe
		path  string
	}{{"readiness", c.ReadinessProbe, "/readyz"}, {"liveness", c.LivenessProbe, "/healthz"}} {
		if pr.probe == nil || pr.probe.HTTPGet == nil {
			t.Errorf("%s probe is not an HTTP GET", pr.name)
			continue
		}
		g := pr.probe.HTTPGet
		if g.Path != pr.path || !routes[g.Path] {
			t.Errorf("%s probe path %q, want %s, a GET route of the server", pr.name, g.Path, pr.path)
		}
		if p, ok := containerPort(c, g.Port); !ok || p != apiPort {
			t.Errorf("%s probe port %s, want the API port %d", pr.name, g.Port.String(), apiPort)
		}
	}

	// Drain: the kubelet waits longer than the service drains.
	delay, err1 := time.ParseDuration(env["SHUTDOWN_DELAY"].Value)
	timeout, err2 := time.ParseDuration(env["SHUTDOWN_TIMEOUT"].Value)
	if err1 != nil || err2 != nil || delay <= 0 {
		t.Errorf("SHUTDOWN_DELAY %q and SHUTDOWN_TIMEOUT %q: want both set, the delay above 0", env["SHUTDOWN_DELAY"].Value, env["SHUTDOWN_TIMEOUT"].Value)
	}
	grace := dep.Spec.Template.Spec.TerminationGracePeriodSeconds
	if grace == nil || time.Duration(*grace)*time.Second <= delay+timeout {
		t.Errorf("terminationGracePeriodSeconds %v, want above SHUTDOWN_DELAY + SHUTDOWN_TIMEOUT = %v", grace, delay+timeout)
	}
	if rp := c.ReadinessProbe; rp != nil {
		// The endpoints see the pod unready within failureThreshold periods.
		notice := time.Duration(max(rp.PeriodSeconds, 1)*max(rp.FailureThreshold, 1)) * time.Second
		if notice >= delay {
			t.Errorf("readiness notices the drain after %v, not within SHUTDOWN_DELAY %v", notice, delay)
		}
	}
	_ = dir
}

func checkNetworkPolicy(t *testing.T, np *networkingv1.NetworkPolicy, c *corev1.Container, podLabels map[string]string) {
	t.Helper()
	selects(t, "NetworkPolicy", &np.Spec.PodSelector, podLabels)
	types := fmt.Sprint(np.Spec.PolicyTypes)
	if !strings.Contains(types, "Ingress") || !strings.Contains(types, "Egress") {
		t.Errorf("NetworkPolicy types %s, want Ingress and Egress", types)
	}
	if len(np.Spec.Egress) != 0 {
		t.Errorf("NetworkPolicy allows egress %+v; the service calls nothing", np.Spec.Egress)
	}
	reached := map[string]bool{}
	for i, rule := range np.Spec.Ingress {
		if len(rule.From) == 0 || len(rule.Ports) == 0 {
			t.Errorf("ingress rule %d allows every source or every port", i)
		}
		for _, f := range rule.From {
			if f.IPBlock != nil || f.NamespaceSelector == nil || len(f.NamespaceSelector.MatchLabels)+len(f.NamespaceSelector.MatchExpressions) == 0 {
				t.Errorf("ingress rule %d: source %+v, want a namespace named by a selector", i, f)
			}
		}
		for _, p := range rule.Ports {
			if p.Port == nil {
				t.Errorf("ingress rule %d: a rule without a port", i)
				continue
			}
			if _, ok := containerPort(c, *p.Port); !ok {
				t.Errorf("ingress rule %d: port %s is not a container port", i, p.Port.String())
			}
			reached[p.Port.String()] = true
		}
	}
	if !reached["http"] || !reached["metrics"] || len(reached) != 2 {
		t.Errorf("ingress reaches ports %v, want http (the gateway) and metrics (the scraper)", reached)
	}
}
