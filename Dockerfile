# The release image: the static scangate binary alone on an empty base (no shell, no
# package manager), run as an unprivileged user. goreleaser (dockers_v2) builds it per
# platform with the binary it built under $TARGETPLATFORM/.
# Use: docker run --rm -v "$PWD:/src" -w /src IMAGE check models
FROM scratch
ARG TARGETPLATFORM
COPY ${TARGETPLATFORM}/scangate /usr/local/bin/scangate
USER 65532:65532
ENTRYPOINT ["/usr/local/bin/scangate"]
