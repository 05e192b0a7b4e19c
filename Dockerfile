# The polewright workbench as a container image.
#
# No Docker engine runs on the development or CI machines of this project,
# so this file is not built or tested there; it is kept plain so that it
# builds anywhere a Docker engine and the Go module proxy are reachable:
#
#   docker build -t polewright .
#   docker run --rm -p 8080:8080 polewright
#
# Build stage: the Go toolchain compiles a static binary. The templ
# components are committed as generated Go, so no generator runs here.
FROM golang:1.26 AS build
WORKDIR /src
COPY go.mod go.sum ./
RUN go mod download
COPY . .
RUN CGO_ENABLED=0 go build -trimpath -ldflags="-s -w" -o /out/polewright ./cmd/polewright

# Runtime stage: a distroless static image with no shell, as a non-root user.
# The binary embeds its style sheet, script and fonts; it needs no files.
FROM gcr.io/distroless/static-debian12:nonroot
COPY --from=build /out/polewright /polewright
USER nonroot:nonroot
EXPOSE 8080
ENTRYPOINT ["/polewright"]
CMD ["serve", "-addr", ":8080"]
