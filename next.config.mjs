/** @type {import('next').NextConfig} */
const csp = (script) => ({
  key: 'Content-Security-Policy',
  value: [
    "default-src 'self'",
    `script-src ${script}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join('; '),
});

const securityHeaders = [
  // Pages load only our own scripts, styles, fonts and images; nothing may frame the app.
  csp("'self' 'unsafe-inline'"),
  { key: 'X-Content-Type-Options', value: 'nosniff' },
  { key: 'Referrer-Policy', value: 'same-origin' },
  { key: 'X-Frame-Options', value: 'DENY' },
  { key: 'Permissions-Policy', value: 'camera=(), microphone=(), geolocation=()' },
];

const nextConfig = {
  // Sequelize loads its dialect dynamically; bundling it breaks that, so both stay external. The export writers'
  // libraries (exceljs, archiver, xmlbuilder2) are loaded from node_modules as they are, too.
  serverExternalPackages: ['sequelize', 'mariadb', 'pino', 'nodemailer', 'exceljs', 'archiver', 'xmlbuilder2'],
  poweredByHeader: false,
  reactStrictMode: true,
  async headers() {
    return [
      { source: '/:path*', headers: securityHeaders },
      // Case report form pages only: the form renderer compiles the CRF's JSON Schema in the browser (AJV generates
      // code), which needs 'unsafe-eval'. The server validates every save again; no other page allows eval.
      { source: '/studies/:study/sites/:site/participants/:participant/forms/:form', headers: [csp("'self' 'unsafe-inline' 'unsafe-eval'")] },
    ];
  },
};

export default nextConfig;
