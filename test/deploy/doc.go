// Package deploy holds the tests of the deployment files: the Kubernetes
// manifests under deploy/k8s, rendered with Kustomize and checked against
// the service's routes and flags, and the Dockerfile, whose build is
// reproduced and whose binary is run as the image's user.
package deploy
